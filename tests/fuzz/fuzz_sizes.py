"""atheris harness: combined sizes and column sizes (checker.ingest.notation.parse_size,
parse_column). See README.md."""

import sys

from _harness import atheris, cell, finite, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.notation import NotationError, parse_column, parse_size


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    scale = fdp.PickValueInList([1.0, 10.0, 1000.0])
    parts = fdp.PickValueInList([2, 3])
    value = cell(fdp)
    try:
        dims = parse_size(value, scale, parts)
    except NotationError as exc:
        assert str(exc).strip()
    else:
        assert len(dims) == parts and all(finite(d) and d > 0 for d in dims), dims
    try:
        col = parse_column(value, scale)
    except NotationError as exc:
        assert str(exc).strip()
    else:
        assert finite(col.cx) and finite(col.cy) and col.cx > 0 and col.cy > 0, col
        assert not col.round or col.cx == col.cy, col


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
