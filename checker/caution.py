"""The engineering caution of the brief: one text, printed by every screen and written to every output."""

CAUTION = (
    "capcheck is an aid to an independent check. It does not replace the judgement of a competent, "
    "qualified engineer; the governing code, its National Annex, local regulations and the project's own "
    "specification prevail, and every finding must be confirmed by the responsible checker. A result of "
    "'ok' means only that the listed check was met on the figures submitted, not that the design is safe."
)
