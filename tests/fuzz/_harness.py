"""Shared set-up of the atheris harnesses (see README.md in this folder).

atheris is not a project dependency: without it a harness says so and exits with status 0, and
pytest never collects these files (their names start with ``fuzz_``, not ``test_``).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path
from typing import Any, Callable

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

try:
    import atheris  # type: ignore[import-not-found]
except ImportError:  # pragma: no cover - depends on the environment
    atheris = None

def require_atheris() -> Any:
    if atheris is None:
        print("atheris is not installed (it is not a project dependency): "
              ".venv/bin/pip install atheris; see tests/fuzz/README.md", file=sys.stderr)
        sys.exit(0)
    return atheris


def cell(fdp: Any) -> Any:
    """One cell value of any kind a sheet or a DataFrame may hold, drawn from the fuzzer's bytes."""
    kind = fdp.ConsumeIntInRange(0, 9)
    if kind <= 4:
        return fdp.ConsumeUnicodeNoSurrogates(fdp.ConsumeIntInRange(0, 80))
    if kind == 5:
        return fdp.ConsumeInt(fdp.ConsumeIntInRange(1, 64))
    if kind == 6:
        return fdp.ConsumeFloat()
    if kind == 7:
        return fdp.PickValueInList([None, True, False, float("nan"), float("inf"), -float("inf"), 0, -0.0])
    if kind == 8:
        import datetime as dt
        return dt.datetime(2000, 1, 1) + dt.timedelta(seconds=fdp.ConsumeIntInRange(0, 10 ** 9))
    return fdp.ConsumeBytes(fdp.ConsumeIntInRange(0, 40))


def finite(v: float) -> bool:
    return isinstance(v, float) and math.isfinite(v)


def run(test_one_input: Callable[[bytes], None]) -> None:
    fuzz = require_atheris()
    fuzz.Setup(sys.argv, test_one_input)
    fuzz.Fuzz()
