"""capcheck's terminal palette: one style and one label per severity, used by every terminal view
(the findings list, ``capcheck explain`` and its table of accepted methods, ``capcheck rules``)."""

from __future__ import annotations

from rich.text import Text

STYLE = {
    "unsafe": "bold white on red3",
    "non-compliant": "bold dark_orange",
    "query": "bold magenta",
    "advisory": "cyan",
    "ok": "green",
}
LABEL = {
    "unsafe": "UNSAFE",
    "non-compliant": "NON-COMPLIANT",
    "query": "QUERY",
    "advisory": "ADVISORY",
    "ok": "ok",
}


def severity_text(sev: str) -> Text:
    """The severity badge: its label in its style, padded by a space each side."""
    return Text(f" {LABEL[sev]} ", style=STYLE[sev])
