"""Array type aliases shared by the physics and the model (one definition each)."""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

#: A float array, or a numpy float scalar where a function is given scalars.
FloatArray = np.floating | NDArray[np.floating]

#: A boolean mask over candidates.
BoolArray = NDArray[np.bool_]

#: Row indices or integer codes over candidates.
IndexArray = NDArray[np.integer]

__all__ = ["BoolArray", "FloatArray", "IndexArray"]
