"""atheris harness: bar notation (checker.ingest.notation.parse_bars). See README.md."""

import sys

from _harness import atheris, cell, finite, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker"]):
        from checker.ingest.notation import NotationError, bars_from_spacing, parse_bars
    from checker.model import STANDARD_BAR_SIZES


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    value = cell(fdp)
    try:
        spec = parse_bars(value)
    except NotationError as exc:
        assert str(exc).strip()
        return
    assert spec.dia in STANDARD_BAR_SIZES, spec
    assert spec.count is None or spec.count >= 1, spec
    assert spec.centres is None or (finite(spec.centres) and spec.centres > 0), spec
    if spec.centres is not None:
        n = bars_from_spacing(fdp.ConsumeFloat(), 75.0, spec.dia, spec.centres)
        assert n != n or isinstance(n, float)


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)
