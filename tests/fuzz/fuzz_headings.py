"""atheris harness: headings (checker.ingest.headings: heading_key, match_heading, match_headings,
count_known). See README.md."""

import sys

from _harness import atheris, cell, finite, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.headings import (
            COORD_FIELDS,
            SCHEDULE_FIELDS,
            count_known,
            heading_key,
            match_heading,
            match_headings,
        )


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    vocabulary = fdp.PickValueInList(["schedule", "coords"])
    fields = SCHEDULE_FIELDS if vocabulary == "schedule" else COORD_FIELDS
    row = [cell(fdp) for _ in range(fdp.ConsumeIntInRange(0, 8))]
    report = match_headings(row, None, vocabulary)
    assert len({m.field for m in report.matches}) == len(report.matches)
    for m in report.matches:
        assert m.field in fields and finite(m.scale) and m.scale > 0, m
    assert 0 <= count_known(row, vocabulary) <= len(fields)
    for h in row:
        if isinstance(h, str):
            words, unit = heading_key(h)
            assert isinstance(words, frozenset)
            name = match_heading(h, vocabulary)[0]
            assert name is None or name in fields


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
