"""LU factors of a network's admittance matrix, part by part, and their solves.

Each connected part of a network has its own SuperLU factorisation (a part's arithmetic never depends on
another part), remembered by its matrix; a right-hand side is solved only in the parts where it has entries,
column by column. Used by :mod:`.network_stages`. Pure: numpy and scipy only, no I/O.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu


#: Matrices of at most this many rows are inverted (LAPACK, through numpy) rather than factorised by SuperLU:
#: a small part of a network (a copy of the demo's is 37 buses) is inverted faster than SuperLU factorises
#: it (60 against 85 µs at 37 rows, about even at 50), and each of its solves is then a product [-].
DENSE_ROWS = 48


class DenseInverse:
    """The inverse of a small matrix, used as its factors: ``solve(rhs)`` is ``inverse @ rhs``.

    The right-hand sides solved here have one entry 1 (a column of the inverse), or a 1 and a -1 (the
    difference of two columns): each product is then exact term by term, so a column's result is the same
    however many columns are solved with it."""

    def __init__(self, dense):
        self.shape = dense.shape
        self.inverse = np.linalg.inv(dense)

    def solve(self, rhs):
        return self.inverse @ rhs


def remembered_lu(n, indptr, indices, data, memo, matrix=None):
    """Factors of the n × n CSC matrix of these arrays (``matrix``, when already built; any sparse format),
    remembered in ``memo`` by its arrays: the same matrix met again is not factorised again. A factorisation
    depends on its matrix alone, so the remembered one is the one a new factorisation would give."""
    key = (n, indptr.tobytes(), indices.tobytes(), data.tobytes())
    lu = memo.get(key)
    if lu is None:
        lu = memo[key] = new_factors(n, indptr, indices, data, matrix)
    return lu


def new_factors(n, indptr, indices, data, matrix=None):
    """The factors of :func:`remembered_lu` made anew: :class:`DenseInverse` up to :data:`DENSE_ROWS` rows,
    SuperLU's above."""
    if n <= DENSE_ROWS:
        if matrix is not None:
            return DenseInverse(matrix.toarray())
        dense = np.zeros((n, n), dtype=np.result_type(data.dtype, complex))
        dense[indices, np.repeat(np.arange(n), np.diff(indptr))] = data  # canonical CSC: one entry per place
        return DenseInverse(dense)
    if matrix is None:
        matrix = sp.csc_matrix((data, indices, indptr), shape=(n, n))
    return splu(matrix)


#: Factors of at least this many rows solve their right-hand sides together (SuperLU's several-column solve,
#: about 1.3 times faster at 10,000 buses). Such a part is too large to share an uncertainty run's stack with
#: another copy (arcflash.study.stacking.ALONE_BUSES: a site of more buses is stacked alone, tested),
#: so which columns it solves together depends only on its own arcs, never on how the samples are split [-].
COLUMNS_TOGETHER_ROWS = 2100


def solve_each(lu, rhs):
    """``lu.solve(rhs)`` column by column: each column's arithmetic is then its own, whatever else is solved
    with it (SuperLU's solve of several right-hand sides at once rounds a column differently from its solve
    alone, so a batch's make-up would reach the last digits of the results: a copy of a stacked site would
    differ from its sample studied alone, a split of the samples from another). Factors of at least
    :data:`COLUMNS_TOGETHER_ROWS` rows solve the columns together, and so does a :class:`DenseInverse`
    (its products are exact term by term)."""
    if rhs.ndim == 1 or lu.shape[0] >= COLUMNS_TOGETHER_ROWS or isinstance(lu, DenseInverse):
        return lu.solve(np.ascontiguousarray(rhs))
    out = np.empty(rhs.shape, dtype=np.result_type(rhs.dtype, complex))
    for column in range(rhs.shape[1]):
        out[:, column] = lu.solve(np.ascontiguousarray(rhs[:, column]))
    return out


class PartsLU:
    """Factors of a block-diagonal matrix, one per part: ``solve`` as SuperLU's, part by part.

    Only the parts where the right-hand side has entries are solved, each with only the columns that
    have entries in it: every other block of the solution is zero (a regular part with a zero right-hand
    side), so a column costs the work of its own part however many parts there are.

    ``factors[number]`` is (rows, LU) of a part, the part factorised when first asked for (a stack of many
    copies whose arcs are followed in a few of them factorises those few); ``row_part`` and ``local`` give
    each row's part and position within it.
    """

    def __init__(self, shape, factors, row_part=None, local=None):
        self.shape = shape
        self.factors = factors
        if row_part is None:
            row_part, local = np.empty(shape[0], dtype=np.intp), np.empty(shape[0], dtype=np.intp)
            for number, (rows, _) in enumerate(factors):
                row_part[rows] = number
                local[rows] = np.arange(rows.size)
        self.row_part, self.local = row_part, local

    def solve(self, rhs):
        out = np.zeros(rhs.shape, dtype=np.result_type(rhs.dtype, complex))
        single = rhs.ndim == 1
        wide = rhs[:, None] if single else rhs
        rows_in, cols_in = np.nonzero(wide)
        for number in np.unique(self.row_part[rows_in]):
            rows, lu = self.factors[number]
            cols = np.unique(cols_in[self.row_part[rows_in] == number])
            solved = solve_each(lu, wide[rows][:, cols])
            if single:
                out[rows] = solved[:, 0]
            else:
                out[np.ix_(rows, cols)] = solved
        return out


class _FactorsWhenAsked:
    """(rows, LU) of each part of a block-diagonal matrix, each factorised (or found in ``memo``) when first
    asked for: a sequence of the parts' CSC pieces."""

    def __init__(self, pieces, memo):
        self._pieces, self._memo, self._done = pieces, memo, {}

    def __len__(self):
        return len(self._pieces)

    def __getitem__(self, number):
        found = self._done.get(number)
        if found is None:
            rows, indptr, indices, data = self._pieces[number]
            found = self._done[number] = (rows, remembered_lu(rows.size, indptr, indices, data, self._memo))
        return found


def factorised(y, part, memo):
    """The LU factorisation of the admittance matrix ``y``, one per connected part (``part``: the part of each
    row), each part factorised when first solved (:class:`PartsLU`) and its factors remembered by its matrix
    in ``memo``: a part's arithmetic never depends on the other parts, and a state that changes one part
    refactorises only that one."""
    parts = np.unique(part)
    if parts.size == 1:
        return remembered_lu(y.shape[0], y.indptr, y.indices, y.data, memo, y)
    y = y.tocsc()  # canonical (sorted, summed): each part's columns hold only that part's rows
    order = np.argsort(part, kind="stable")
    bounds = np.flatnonzero(np.diff(part[order])) + 1
    starts = np.concatenate(([0], bounds))
    sizes = np.diff(np.append(starts, part.size))
    local = np.empty(part.size, dtype=np.intp)
    local[order] = np.arange(part.size) - np.repeat(starts, sizes)
    row_part = np.empty(part.size, dtype=np.intp)
    row_part[order] = np.repeat(np.arange(starts.size), sizes)
    # The entries of the columns in part order, each part's a contiguous run (its own CSC arrays).
    length = np.diff(y.indptr)[order]
    first = np.repeat(y.indptr[order], length)
    entry = first + np.arange(first.size) - np.repeat(np.cumsum(length) - length, length)
    indices, data = local[y.indices[entry]].astype(np.int32), y.data[entry]
    ends = np.concatenate(([0], np.cumsum(length)))
    pieces = [(order[lo:hi], (ends[lo:hi + 1] - ends[lo]).astype(np.int32), indices[ends[lo]:ends[hi]],
               data[ends[lo]:ends[hi]]) for lo, hi in zip(starts.tolist(), np.append(bounds, part.size).tolist())]
    return PartsLU(y.shape, _FactorsWhenAsked(pieces, memo), row_part, local)
