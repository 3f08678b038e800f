"""The types of the calcs functions' arguments and results (``mypy --strict`` over checker/calcs).

The functions take a scalar or a numpy array per argument (one value per cap, or per cap and pile)
and broadcast them; their results are float arrays (``NDArray[np.float64]``) unless stated.
"""

from __future__ import annotations

from typing import Any, TypeAlias

import numpy as np
from numpy.typing import NDArray

Real: TypeAlias = "float | NDArray[Any]"     # a number, or an array of them (or a mask) per cap
Floats: TypeAlias = NDArray[np.float64]      # a result per cap (or per cap and pile)
