"""Adaptive piecewise Chebyshev tables of smooth functions of two variables.

A table covers a box of the (x, t) plane (for a gas: x = ln p, t = T) with tensor
Chebyshev interpolants of degree 16 x 16 in each direction, fed by a callback that
computes the tabulated quantities at the 17 x 17 Chebyshev points of the second kind of a
box.  A box is accepted when the sum of its highest coefficients (relative to each
quantity's tolerance) is below a quarter; otherwise it is halved along the direction that
has not converged, down to a smallest width.  An accepted table keeps the lowest degrees
whose dropped coefficients sum to at most half the tolerance, which bounds the
truncation error [1]_.  Evaluation is a small matrix product per block of states, with
derivatives (d/dx, d/dt) taken from the same coefficients.

Boxes are the bounding box of the requested states widened and snapped outward to a
power-of-two lattice, so that repeated calls with similar samples reuse a table; the
last ``cache_size`` boxes are kept.

References
----------
.. [1] L. N. Trefethen, *Approximation Theory and Approximation Practice*, SIAM, 2013,
   chapters 3 and 4 (Chebyshev coefficients and their decay) (from memory of the book).
"""

from __future__ import annotations

import math
from collections import OrderedDict
from collections.abc import Callable, Sequence

import numpy as np
from numpy.polynomial import chebyshev as _cheb

_DEG = 16                                   # degree of the trial interpolant per direction
_NODES = _cheb.chebpts2(_DEG + 1)           # Chebyshev points of the second kind on [-1, 1]
_VINV = np.linalg.inv(_cheb.chebvander(_NODES, _DEG))
_CHUNK = 8192                               # most states per matrix product (stays in cache)
# Matrix products are kept below OpenBLAS's multithreading threshold (m n k <= 65536 * 4):
# threads give nothing for these thin products and, on a loaded machine, cost tenfold.
_MNK = 2.0e5


#: One requested column: (quantity index, order of d/dx, order of d/dt).
Column = tuple[int, int, int]


class _Node:
    """A box of the (ln p, T) plane: a Chebyshev table (leaf) or two halves."""

    __slots__ = ("box", "coef", "children", "axis", "split_at", "failed", "stacks")

    def __init__(self, box):
        self.box = box              # (x_lo, x_hi, t_lo, t_hi)
        self.coef = None            # list over quantities of 2-D Chebyshev coefficients
        self.children = None
        self.axis = 0
        self.split_at = 0.0
        self.failed = False
        self.stacks = {}            # columns -> coefficient matrices (see ChebyshevTables.stack)

    def split(self, axis):
        x0, x1, t0, t1 = self.box
        if axis == 0:
            m = 0.5 * (x0 + x1)
            boxes = ((x0, m, t0, t1), (m, x1, t0, t1))
        else:
            m = 0.5 * (t0 + t1)
            boxes = ((x0, x1, t0, m), (x0, x1, m, t1))
        self.axis, self.split_at = axis, m
        self.children = (_Node(boxes[0]), _Node(boxes[1]))


def _vander_rows(z, m, out):
    """Chebyshev polynomials T_0..T_m at z as rows of ``out`` (shape (m+1, n))."""
    out[0] = 1.0
    if m > 0:
        out[1] = z
    z2 = 2.0 * z if m > 1 else None
    for k in range(2, m + 1):
        np.multiply(z2, out[k - 1], out=out[k])
        out[k] -= out[k - 2]
    return out


def _snap(lo, hi, minimum, pad):
    """Widen [lo, hi] by ``pad`` and 2 % and snap it outward to a power-of-two lattice."""
    w = hi - lo
    lo, hi = lo - pad - 0.02 * w, hi + pad + 0.02 * w
    w = max(hi - lo, minimum)
    step = 2.0 ** math.ceil(math.log2(w / 4.0))
    lo_s, hi_s = math.floor(lo / step) * step, math.ceil(hi / step) * step
    if hi_s - lo_s < minimum:
        hi_s = lo_s + math.ceil(minimum / step) * step
    return lo_s, hi_s


class ChebyshevTables:
    """Cached adaptive Chebyshev tables of ``n_quantities`` functions of (x, t).

    Parameters
    ----------
    sample : callable
        ``sample(xs, ts)`` -> array (len(xs), len(ts), n_quantities) of the quantities at
        the grid of ``xs`` by ``ts``, or None where any point cannot be computed (the box
        is then split, or marked failed at the smallest width).
    n_quantities : int
    scales : callable
        ``scales(values, box)`` -> array (n_quantities,) of the size each quantity's
        relative tolerance refers to (1 for quantities tabulated as logarithms).
    tolerance : array_like
        Relative tolerance of each quantity.
    min_width : (float, float)
        Smallest box width in x and in t.
    snap_min : (float, float)
        Smallest snapped box width in x and in t.
    cache_size : int
        Boxes (table trees) kept.
    """

    def __init__(self, sample: Callable[[np.ndarray, np.ndarray], np.ndarray | None],
                 n_quantities: int, scales: Callable[[np.ndarray, tuple], np.ndarray],
                 tolerance: Sequence[float] | np.ndarray, *, min_width: tuple[float, float],
                 snap_min: tuple[float, float], cache_size: int) -> None:
        self.sample, self.nq, self.scales = sample, int(n_quantities), scales
        self.tolerance = np.asarray(tolerance, dtype=float)
        self.min_width, self.snap_min, self.cache_size = min_width, snap_min, int(cache_size)
        self._tables: OrderedDict = OrderedDict()

    def clear(self) -> None:
        self._tables = OrderedDict()

    def root(self, x, t, pad: tuple[float, float]):
        """Cached table tree for the snapped bounding box of the finite states.

        ``pad`` widens the box (in x, in t) before snapping.
        """
        fin = np.isfinite(x) & np.isfinite(t)
        if not fin.all():
            x, t = x[fin], t[fin]
        if x.size == 0:
            return None
        bx = _snap(float(x.min()), float(x.max()), self.snap_min[0], pad[0])
        bt = _snap(float(t.min()), float(t.max()), self.snap_min[1], pad[1])
        key = bx + bt
        node = self._tables.get(key)
        if node is None:
            node = _Node(key)
            self._tables[key] = node
            if len(self._tables) > self.cache_size:
                self._tables.popitem(last=False)
        else:
            self._tables.move_to_end(key)
        return node

    def fit(self, node: _Node) -> None:
        """Fit the Chebyshev table of a leaf, or split it (or mark it failed)."""
        x0, x1, t0, t1 = node.box
        xs = 0.5 * (x0 + x1) + 0.5 * (x1 - x0) * _NODES
        ts = 0.5 * (t0 + t1) + 0.5 * (t1 - t0) * _NODES
        vals = self.sample(xs, ts)
        ok = vals is not None and bool(np.isfinite(vals).all())
        mw = self.min_width
        small = (x1 - x0 <= mw[0], t1 - t0 <= mw[1])
        if vals is None or not ok:
            if all(small):
                node.failed = True
            else:
                node.split(0 if (x1 - x0) / mw[0] >= (t1 - t0) / mw[1] else 1)
            return
        coef: np.ndarray = np.einsum("ai,ijq,bj->abq", _VINV, vals, _VINV)
        scale = self.scales(vals, node.box)
        a = np.abs(coef) / (scale * self.tolerance)     # in units of each quantity's tolerance
        tail_x = float(a[_DEG - 1:, :, :].sum(axis=(0, 1)).max())
        tail_t = float(a[:, _DEG - 1:, :].sum(axis=(0, 1)).max())
        if max(tail_x, tail_t) > 0.25 and not all(small):
            if (tail_x >= tail_t or small[1]) and not small[0]:
                node.split(0)
            else:
                node.split(1)
            return
        # Converged (or as small as allowed): keep the lowest degrees whose dropped
        # coefficients sum to at most half the tolerance.
        cum = a.cumsum(axis=0).cumsum(axis=1)           # (i, j, q): sum over [0..i] x [0..j]
        dropped = cum[-1, -1, :][None, None, :] - cum
        sizes = np.outer(np.arange(_DEG + 1) + 1.0, np.arange(_DEG + 1) + 1.0)
        node.coef = []
        for q in range(self.nq):
            cand = np.where(dropped[:, :, q] <= 0.5, sizes, np.inf)
            cand[-1, -1] = min(cand[-1, -1], sizes[-1, -1])
            i, j = np.unravel_index(int(np.argmin(cand)), cand.shape)
            node.coef.append(coef[: i + 1, : j + 1, q].copy())

    def stack(self, node: _Node, cols: tuple[Column, ...]):
        """Coefficients of a leaf for the requested (quantity, d/dlnp, d/dT) columns.

        Returns ``(full, two, mx, my, ncol)``: ``full`` (ncol, (mx+1)(my+1)) multiplies
        the tensor basis ``T_i(X) T_j(Y)``; ``two`` ((mx+1) ncol, my+1) multiplies the
        ``T_j(Y)`` rows first (cheaper when few columns are requested).
        """
        got = node.stacks.get(cols)
        if got is not None:
            return got
        x0, x1, t0, t1 = node.box
        blocks = []
        for q, dx, dt in cols:
            c = node.coef[q]
            if dx:
                c = _cheb.chebder(c, 1, 2.0 / (x1 - x0), axis=0) if c.shape[0] > 1 else 0.0 * c
            if dt:
                c = _cheb.chebder(c, 1, 2.0 / (t1 - t0), axis=1) if c.shape[1] > 1 else 0.0 * c
            blocks.append(c)
        mx = max(b.shape[0] for b in blocks) - 1
        my = max(b.shape[1] for b in blocks) - 1
        nc = len(cols)
        c3 = np.zeros((mx + 1, nc, my + 1))
        for k, b in enumerate(blocks):
            c3[: b.shape[0], k, : b.shape[1]] = b
        full = np.ascontiguousarray(c3.transpose(1, 0, 2).reshape(nc, (mx + 1) * (my + 1)))
        got = (full, c3.reshape((mx + 1) * nc, my + 1), mx, my, nc)
        node.stacks[cols] = got
        return got

    def leaf_eval(self, node: _Node, x, t, cols: tuple[Column, ...], out) -> None:
        """Evaluate the leaf's columns at states x = ln p, t into ``out`` (ncol, n)."""
        full, two, mx, my, nc = self.stack(node, cols)
        x0, x1, t0, t1 = node.box
        ax, bx = 2.0 / (x1 - x0), (x0 + x1) / (x1 - x0)
        at, bt = 2.0 / (t1 - t0), (t0 + t1) / (t1 - t0)
        n = x.size
        nk = (mx + 1) * (my + 1)
        chunk = min(_CHUNK, n, max(256, int(_MNK / (nk * nc)) // 64 * 64))
        use_full = nk <= 2 * (mx + 1) * nc
        tx = np.empty((mx + 1, chunk))
        ty = np.empty((my + 1, chunk))
        if use_full:
            basis = np.empty((mx + 1, my + 1, chunk))
            res = np.empty((nc, chunk))
        else:
            zbuf = np.empty(((mx + 1) * nc, chunk))
            tmp = np.empty((nc, chunk))
        for s in range(0, n, chunk):
            e = min(s + chunk, n)
            m = e - s
            zx = x[s:e] * ax
            zx -= bx
            zt = t[s:e] * at
            zt -= bt
            _vander_rows(zx, mx, tx[:, :m])
            _vander_rows(zt, my, ty[:, :m])
            if use_full:
                b = basis[:, :, :m]
                np.multiply(tx[:, None, :m], ty[None, :, :m], out=b)
                if m == chunk:
                    np.matmul(full, basis.reshape(nk, chunk), out=res)
                    out[:, s:e] = res
                else:
                    out[:, s:e] = full @ b.reshape(nk, m)
            else:
                z = np.matmul(two, ty[:, :m], out=zbuf[:, :m]).reshape(mx + 1, nc, m)
                o = out[:, s:e]
                np.multiply(z[0], tx[0, :m], out=o)
                for i in range(1, mx + 1):
                    np.multiply(z[i], tx[i, :m], out=tmp[:, :m])
                    o += tmp[:, :m]

    def evaluate(self, x, t, cols: Sequence[Column], root: _Node | None = None,
                 pad: tuple[float, float] = (0.0, 0.0)) -> np.ndarray:
        """Columns (rows of the result) at states (x, t) from the tables of ``root`` (default:
        the box of these states, widened by ``pad``)."""
        cols = tuple(cols)
        n = x.size
        out = np.full((len(cols), n), np.nan)
        if root is None:
            root = self.root(x, t, pad)
        if root is None:
            return out
        stack: list[tuple[_Node, np.ndarray | None]] = [(root, None)]
        while stack:
            node, idx = stack.pop()
            if idx is not None and idx.size == 0:
                continue
            if node.coef is None and node.children is None and not node.failed:
                self.fit(node)
            if node.children is not None:
                coord = x if node.axis == 0 else t
                if idx is None:
                    lower = coord < node.split_at
                    stack.append((node.children[0], np.flatnonzero(lower)))
                    stack.append((node.children[1], np.flatnonzero(~lower)))
                else:
                    lower = coord[idx] < node.split_at
                    stack.append((node.children[0], idx[lower]))
                    stack.append((node.children[1], idx[~lower]))
                continue
            if node.failed:
                continue
            if idx is None:
                self.leaf_eval(node, x, t, cols, out)
            else:
                part = np.empty((len(cols), idx.size))
                self.leaf_eval(node, x[idx], t[idx], cols, part)
                out[:, idx] = part
        return out

    @staticmethod
    def in_box(root: _Node, x, t) -> bool:
        """Whether every finite state lies in the box of ``root``."""
        x0, x1, t0, t1 = root.box
        with np.errstate(invalid="ignore"):
            inside = (x >= x0) & (x <= x1) & (t >= t0) & (t <= t1)
        return bool(inside[np.isfinite(x) & np.isfinite(t)].all())
