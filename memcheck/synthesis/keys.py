"""Exact set membership for rows of small integers: each row (with a tag byte) becomes a bytes key.

Rows are first made unique with numpy (a sort over fixed-size byte strings), so Python only touches
distinct rows; keys are the rows' own bytes, so two different rows never share a key.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

U8 = npt.NDArray[np.uint8]
IntArray = npt.NDArray[np.int64]


def keep_new(rows: U8, tag: U8, seen: set[bytes]) -> IntArray:
    """Indices of ``rows`` (n, k) whose (tag, row) is not in ``seen`` (first occurrence of each), in
    order; their keys are added to ``seen``."""
    n = rows.shape[0]
    if n == 0:
        return np.zeros(0, np.int64)
    data = np.ascontiguousarray(np.concatenate([tag.reshape(n, 1).astype(np.uint8), rows.reshape(n, -1)], axis=1))
    width = data.shape[1]
    view = data.view(np.dtype((np.void, width))).ravel()
    _, first = np.unique(view, return_index=True)
    first.sort()
    blob = data[first].tobytes()
    keep = []
    for j, i in enumerate(first.tolist()):
        key = blob[j * width : (j + 1) * width]
        if key not in seen:
            seen.add(key)
            keep.append(i)
    return np.array(keep, np.int64)
