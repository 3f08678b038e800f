"""atheris harness: numbers and units (checker.ingest.notation.parse_quantity, parse_number,
parse_steel_grade, normalise_unit). See README.md."""

import sys

from _harness import atheris, cell, finite, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.notation import (
            UNITS,
            NotationError,
            normalise_unit,
            parse_number,
            parse_quantity,
            parse_steel_grade,
        )


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    kind = fdp.PickValueInList([None, "length", "force", "moment", "stress", "area", "count"])
    scale = fdp.PickValueInList([1.0, 10.0, 1e3, 1e6, 1e9])
    value = cell(fdp)
    try:
        q = parse_quantity(value)
    except NotationError as exc:
        assert str(exc).strip()
    else:
        assert finite(q.value) and (q.unit is None or q.unit in UNITS), q
        assert not isinstance(value, bool)
    try:
        v = parse_number(value, kind, scale)
    except NotationError as exc:
        assert str(exc).strip()
    else:
        assert finite(v), v
    try:
        assert finite(parse_steel_grade(value))
    except NotationError as exc:
        assert str(exc).strip()
    if isinstance(value, str):
        u = normalise_unit(value)
        assert u is None or u in UNITS


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
