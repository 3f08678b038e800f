"""atheris harness: heading mapping files (checker.ingest.headings.mapping_from_toml and
mapping_from_dict). See README.md."""

import sys

from _harness import atheris, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.errors import IngestError
        from checker.ingest.headings import COORD_FIELDS, SCHEDULE_FIELDS, mapping_from_toml

PIECES = ["[headings]\n", '"Pile Ø (m)" = "pile_dia [m]"\n', '"NEd" = "n_ed [MN]"\n', '"Ref" = "ignore"\n',
          '"X" = 3\n', '"Y" = "nonsense"\n', "[headings.sub]\n", "a = [1, 2]\n", "[[headings]]\n", "= =\n",
          '"q" = "cover [kN]"\n', '"c" = "bars_x [mm]"\n', '"k" = "x [m]"\n', '"m" = "mark ["\n', "\"\"\"\n"]


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    if fdp.ConsumeBool():
        text = fdp.ConsumeUnicodeNoSurrogates(fdp.ConsumeIntInRange(0, 400))
    else:
        text = "".join(fdp.PickValueInList(PIECES) if fdp.ConsumeBool()
                       else fdp.ConsumeUnicodeNoSurrogates(12) for _ in range(fdp.ConsumeIntInRange(1, 12)))
    try:
        hmap = mapping_from_toml(text, "<fuzz>")
    except IngestError as exc:
        assert str(exc).startswith("<fuzz>: ")
        return
    known = set(SCHEDULE_FIELDS) | set(COORD_FIELDS)
    for entry in hmap.entries.values():
        assert entry.field is None or entry.field in known, entry


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
