"""atheris harness: concrete class (checker.ingest.notation.parse_concrete). See README.md."""

import sys

from _harness import atheris, cell, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.notation import NotationError, parse_concrete
    from checker.model import CONCRETE_CLASSES


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    value = cell(fdp)
    try:
        c = parse_concrete(value)
    except NotationError as exc:
        assert str(exc).strip()
        return
    # EN 1992-1-1:2004 Table 3.1 and the BS 8500-1 classes (checker.model.CONCRETE_CLASSES)
    assert c.name in CONCRETE_CLASSES and CONCRETE_CLASSES[c.name] == (c.fck, c.fck_cube), c


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
