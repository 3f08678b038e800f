"""capcheck's terminal palette: one style and one label per severity, used by every terminal view
(the findings list, ``capcheck explain`` and its table of accepted methods, ``capcheck rules``),
and the sizes of the findings view (light: the command line reads them for its help)."""

from __future__ import annotations

from rich.text import Text

from checker.findings import Severity

LIST_ALL_UP_TO = 40      # caps: up to this many the terminal lists every cap's findings
WORST_CAPS = 20          # caps listed in full under the summary view (--worst N)

STYLE = {s.value: s.style for s in Severity}
LABEL = {s.value: s.label for s in Severity}


def severity_text(sev: str) -> Text:
    """The severity badge: its label in its style, padded by a space each side."""
    return Text(f" {LABEL[sev]} ", style=STYLE[sev])
