"""Coding matrices, and the arithmetic behind custom contrasts.

This is the lower layer of the codings: it knows nothing about
:class:`nestfit.design._coding.Coding`. It holds

* :class:`CodingMatrix`, the result of every coding (re-exported by
  ``_coding``), with the hypothesis matrix that says what each coefficient
  estimates;
* the parsing, checking and generalized-inverse construction used by
  :class:`nestfit.design._coding.FromHypotheses`: stack the grand-mean row
  ``1/k`` on top of the contrast rows ``L`` to get the hypothesis matrix
  ``H``; the full coding is ``H^{-1}`` (``pinv(H)`` when fewer than ``k - 1``
  contrasts are given).

References
----------
Schad, D. J., Vasishth, S., Hohenstein, S. & Kliegl, R. (2020). How to
capitalize on a priori contrasts in linear (mixed) models: A tutorial.
Journal of Memory and Language, 110, 104038 (article number from memory).
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import patsy

from nestfit.errors import ContrastError, FactorError, RankDeficientError

if TYPE_CHECKING:
    import pandas as pd

__all__ = [
    "CodingMatrix", "ContrastRow", "build_coding", "check_contrasts", "check_levels",
    "check_spacing",
    "parse_contrasts", "rows_for_levels",
]


#: One parsed contrast: weights in level order, or a mapping level -> weight.
ContrastRow = tuple[float, ...] | dict[str, float]

_SUM_TOL = 1e-10


def check_levels(levels: Sequence[Any]) -> tuple[str, ...]:
    """Level labels as a tuple of str; at least two, no duplicates."""
    if isinstance(levels, (str, bytes)):
        raise FactorError(f"levels must be a sequence of level labels, not the single string "
                          f"{levels!r}; pass a list such as ['A', 'B', 'C']")
    labels = tuple(str(level) for level in levels)
    if len(labels) < 2:
        raise FactorError(f"a coding needs at least 2 levels, got {len(labels)} "
                          f"({', '.join(labels) or 'none'}); a one-level factor has no contrasts, "
                          "so leave it out of the model")
    duplicated = [lvl for lvl, n in Counter(labels).items() if n > 1]
    if duplicated:
        raise FactorError(f"level {duplicated[0]!r} appears more than once in the levels "
                          f"({', '.join(labels)}); level labels must be unique, so rename or "
                          "merge them")
    return labels


@dataclass(frozen=True, eq=False)
class CodingMatrix:
    """A coding matrix together with its levels and column labels.

    Parameters
    ----------
    levels : tuple of str
        The ``k`` factor levels, one per row, in order.
    matrix : ndarray, shape (k, p)
        Design entries: row ``i`` is what every observation in level ``i``
        contributes to the ``p`` columns. Stored as a read-only float copy.
    column_labels : tuple of str
        One label per column, naming what its coefficient estimates.
    coding : str
        The :attr:`Coding.label` of the coding that produced the matrix.
    full_rank : bool, default False
        Whether the matrix was built for a model without a separate intercept
        (it then already spans the constant). Sets the default of
        :meth:`hypothesis_matrix`.
    """

    levels: tuple[str, ...]
    matrix: np.ndarray
    column_labels: tuple[str, ...]
    coding: str
    full_rank: bool = False

    def __post_init__(self) -> None:
        levels = check_levels(self.levels)
        labels = tuple(str(label) for label in self.column_labels)
        mat = np.array(self.matrix, dtype=float)
        if mat.ndim != 2 or mat.shape != (len(levels), len(labels)):
            raise ContrastError(f"coding matrix has shape {mat.shape}, expected ({len(levels)}, "
                                f"{len(labels)}): one row per level, one column per label")
        if not np.all(np.isfinite(mat)):
            raise ContrastError("coding matrix has non-finite entries; every entry must be finite")
        duplicated = [lab for lab, n in Counter(labels).items() if n > 1]
        if duplicated:
            raise ContrastError(f"column label {duplicated[0]!r} occurs twice in {labels}; "
                                "rename the levels so that the labels differ")
        mat.flags.writeable = False
        object.__setattr__(self, "levels", levels)
        object.__setattr__(self, "column_labels", labels)
        object.__setattr__(self, "matrix", mat)
        object.__setattr__(self, "full_rank", bool(self.full_rank))

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, CodingMatrix):
            return NotImplemented
        return (self.levels, self.column_labels, self.coding, self.full_rank) == (
            other.levels, other.column_labels, other.coding, other.full_rank
        ) and bool(np.array_equal(self.matrix, other.matrix))

    def __hash__(self) -> int:
        return hash((self.levels, self.column_labels, self.coding, self.full_rank,
                     self.matrix.tobytes()))

    def hypothesis_matrix(
        self, *, with_intercept: bool | None = None, weights: Sequence[float] | None = None
    ) -> np.ndarray:
        """What each coefficient estimates, as weights on the cell means.

        With ``X = [1, C]`` (``with_intercept``) or ``X = C``, the result is
        ``pinv(X)``: row ``r`` gives the weights ``h`` such that coefficient
        ``r`` estimates ``h @ mu``, ``mu`` the vector of cell means. With an
        intercept the first row belongs to the intercept.

        Parameters
        ----------
        with_intercept : bool, optional
            Prepend a column of ones. Default: ``not self.full_rank``.
        weights : sequence of float, optional
            Group sizes (or other positive cell weights). They matter only
            when ``X`` has fewer than ``k`` columns: then the model restricts
            the cell means and least squares weights cells by their counts, so
            the rows are ``(X'WX)^{-1} X'W``. ``None`` means equal weights
            (balanced data), i.e. ``pinv(X)``.

        Returns
        -------
        ndarray, shape (p + with_intercept, k)

        Raises
        ------
        RankDeficientError
            If the columns of ``X`` are linearly dependent, e.g. an intercept
            added to a full-rank coding that already spans the constant.

        Examples
        --------
        Reference coding on three levels, with intercept, gives the rows
        ``(1, 0, 0)``, ``(-1, 1, 0)``, ``(-1, 0, 1)``:

        >>> cm = CodingMatrix(("A", "B", "C"), np.eye(3)[:, 1:], ("B-A", "C-A"), "reference")
        >>> cm.hypothesis_matrix()
        array([[ 1.,  0.,  0.],
               [-1.,  1.,  0.],
               [-1.,  0.,  1.]])
        """
        if with_intercept is None:
            with_intercept = not self.full_rank
        k = len(self.levels)
        x = np.column_stack([np.ones(k), self.matrix]) if with_intercept else self.matrix
        if x.shape[1] == 0:
            return np.zeros((0, k))
        if np.linalg.matrix_rank(x) < x.shape[1]:
            raise RankDeficientError(
                f"the {self.coding} coding columns {list(self.column_labels)}"
                f"{' plus an intercept' if with_intercept else ''} are linearly dependent, so the "
                "coefficients are not identified; use with_intercept=False for a full-rank coding"
            )
        if weights is None:
            hyp = np.linalg.inv(x) if x.shape[0] == x.shape[1] else np.linalg.pinv(x)
        else:
            w = np.asarray(weights, dtype=float)
            if w.shape != (k,) or not np.all(np.isfinite(w)) or np.any(w <= 0):
                raise ContrastError(f"weights must be {k} positive finite numbers, one per level "
                                    f"({', '.join(self.levels)})")
            hyp = np.linalg.solve((x.T * w) @ x, x.T * w)
        hyp[np.abs(hyp) < 1e-12 * max(1.0, float(np.abs(hyp).max()))] = 0.0
        return hyp + 0.0  # no negative zeros

    def hypothesis_frame(
        self, *, with_intercept: bool | None = None, weights: Sequence[float] | None = None
    ) -> pd.DataFrame:
        """:meth:`hypothesis_matrix` as a DataFrame: rows coefficients, columns levels."""
        import pandas as pd

        if with_intercept is None:
            with_intercept = not self.full_rank
        rows = (["intercept"] if with_intercept else []) + list(self.column_labels)
        return pd.DataFrame(self.hypothesis_matrix(with_intercept=with_intercept, weights=weights),
                            index=pd.Index(rows, name="coefficient"),
                            columns=pd.Index(self.levels, name="level"))

    def to_frame(self) -> pd.DataFrame:
        """The coding matrix as a DataFrame: rows levels, columns column labels."""
        import pandas as pd

        return pd.DataFrame(self.matrix.copy(), index=pd.Index(self.levels, name="level"),
                            columns=pd.Index(self.column_labels, name="column"))

    def to_contrast_matrix(self) -> patsy.ContrastMatrix:
        """The patsy form; column suffixes are ``"[label]"``."""
        return patsy.ContrastMatrix(self.matrix.copy(), [f"[{c}]" for c in self.column_labels])




def check_spacing(spacing: Any) -> tuple[float, ...]:
    """Polynomial scores: a flat sequence of finite, distinct, increasing numbers."""
    try:
        if isinstance(spacing, (str, bytes)):
            raise ValueError
        x = np.asarray(spacing, dtype=float)
    except (TypeError, ValueError):
        raise ContrastError(f"spacing must be a sequence of numbers, got {spacing!r}") from None
    if x.ndim != 1:
        raise ContrastError(f"spacing must be a flat sequence of numbers, one per level; got an "
                            f"array of shape {x.shape}")
    bad = np.flatnonzero(~np.isfinite(x))
    if bad.size:
        raise ContrastError(f"spacing value {x[bad[0]]} at position {bad[0] + 1} is not finite; "
                            "give a finite score for every level")
    values, counts = np.unique(x, return_counts=True)
    if np.any(counts > 1):
        twice = values[counts > 1][0]
        where = " and ".join(str(i + 1) for i in np.flatnonzero(x == twice))
        raise ContrastError(f"spacing value {twice:g} is repeated (positions {where}); each level "
                            "needs its own score")
    steps = np.flatnonzero(np.diff(x) < 0)
    if steps.size:
        i = int(steps[0])
        raise ContrastError(f"spacing must be strictly increasing in level order, but {x[i]:g} "
                            f"(position {i + 1}) is followed by {x[i + 1]:g}; reorder the levels "
                            "or the scores")
    return tuple(float(v) for v in x)


def _as_weight(value: Any, where: str) -> float:
    try:
        weight = float(value)
    except (TypeError, ValueError):
        raise ContrastError(f"{where}: weight {value!r} is not a number; give numeric weights"
                            ) from None
    if not np.isfinite(weight):
        raise ContrastError(f"{where}: weight {weight!r} is not finite; give finite weights")
    return weight


def _positional_row(value: Any, where: str) -> tuple[float, ...]:
    if isinstance(value, (str, bytes)):
        raise ContrastError(
            f"{where}: got the string {value!r}; give a sequence of weights, one per level, "
            "or a mapping {level: weight}"
        )
    try:
        items = list(value)
    except TypeError:
        raise ContrastError(
            f"{where}: expected a sequence of weights or a mapping {{level: weight}}, "
            f"got {type(value).__name__}"
        ) from None
    return tuple(_as_weight(v, f"{where}, position {i + 1}") for i, v in enumerate(items))


def parse_contrasts(
    contrasts: Any, labels: Sequence[str] | None = None
) -> tuple[tuple[str, ...], tuple[ContrastRow, ...]]:
    """Normalise the accepted input forms into (labels, rows).

    Accepted forms: a 2-D array-like of shape ``(m, k)`` (or 1-D for a single
    contrast), rows labelled by ``labels`` or ``"c1", "c2", ...``; a mapping
    ``label -> {level: weight}`` (levels left out get weight 0); a mapping
    ``label -> sequence of k weights`` in level order.

    Raises
    ------
    ContrastError
        On an empty set of contrasts, non-numeric or non-finite weights,
        ``labels`` of the wrong length or with duplicates, or ``labels`` given
        together with a mapping.
    """
    rows: list[ContrastRow] = []
    if isinstance(contrasts, Mapping):
        if labels is not None:
            raise ContrastError(
                "labels= is only for an array of contrasts; with a mapping the keys are the labels"
            )
        names = [str(key) for key in contrasts]
        for name, value in zip(names, contrasts.values(), strict=True):
            where = f"contrast {name!r}"
            if isinstance(value, Mapping):
                rows.append({str(lvl): _as_weight(w, f"{where}, level {lvl!r}")
                             for lvl, w in value.items()})
            else:
                rows.append(_positional_row(value, where))
    else:
        if isinstance(contrasts, (str, bytes)):
            raise ContrastError(
                f"contrasts must be an array of weights or a mapping, not the string {contrasts!r}"
            )
        try:
            array = np.asarray(contrasts, dtype=float)
        except (TypeError, ValueError):
            raise ContrastError(
                "contrasts must be an (m x k) array of weights on the k cell means, a mapping "
                "label -> {level: weight}, or a mapping label -> sequence of k weights; "
                "could not read the given object as numbers (rows of unequal length?)"
            ) from None
        if array.size == 0:
            raise ContrastError("no contrasts given; give at least one row of weights")
        if array.ndim == 1:
            array = array[np.newaxis, :]
        if array.ndim != 2:
            raise ContrastError(
                f"contrasts must be a 2-D (m x k) array, got an array with {array.ndim} dimensions"
            )
        if labels is None:
            names = [f"c{i + 1}" for i in range(array.shape[0])]
        else:
            names = [str(label) for label in labels]
            if len(names) != array.shape[0]:
                raise ContrastError(
                    f"labels has {len(names)} entries but there are {array.shape[0]} contrast "
                    "rows; give one label per row"
                )
        for name, row in zip(names, array, strict=True):
            rows.append(tuple(_as_weight(w, f"contrast {name!r}") for w in row))
    if not rows:
        raise ContrastError("no contrasts given; give at least one row of weights")
    duplicated = sorted({name for name in names if names.count(name) > 1})
    if duplicated:
        raise ContrastError(f"contrast label(s) {', '.join(map(repr, duplicated))} used twice; "
                            "give each contrast its own label")
    if any(name == "" for name in names):
        raise ContrastError("a contrast has an empty label; give every contrast a name")
    return tuple(names), tuple(rows)


def rows_for_levels(
    labels: Sequence[str], rows: Sequence[ContrastRow], levels: Sequence[str]
) -> np.ndarray:
    """Lay the parsed rows out as an ``(m, k)`` array in the order of ``levels``.

    Raises
    ------
    ContrastError
        If a positional row does not have exactly ``k`` weights, a mapping row
        names a level the factor does not have, or there are more than
        ``k - 1`` contrasts.
    """
    k = len(levels)
    shown = ", ".join(levels)
    if len(rows) > k - 1:
        raise ContrastError(
            f"got {len(rows)} contrasts for a factor with {k} levels ({shown}); at most k - 1 = "
            f"{k - 1} contrasts can be independent of each other and of the grand mean - drop some"
        )
    out = np.zeros((len(rows), k))
    position = {level: i for i, level in enumerate(levels)}
    for i, (name, row) in enumerate(zip(labels, rows, strict=True)):
        if isinstance(row, dict):
            for level, weight in row.items():
                if level not in position:
                    raise ContrastError(
                        f"contrast {name!r} names level {level!r}, which the factor does not have "
                        f"(levels: {shown}); fix the level name (levels left out get weight 0)"
                    )
                out[i, position[level]] = weight
        else:
            if len(row) != k:
                raise ContrastError(
                    f"contrast {name!r} has {len(row)} weights but the factor has {k} levels "
                    f"({shown}); expected {k} weights, one per level in level order"
                )
            out[i] = row
    return out


def check_contrasts(labels: Sequence[str], rows: np.ndarray, *, allow_general: bool) -> None:
    """Check that the rows sum to zero and are linearly independent.

    Independence is checked against the grand-mean row and the earlier rows,
    one row at a time, so the message can name the first offending row.

    Raises
    ------
    ContrastError
        A row does not sum to zero (unless ``allow_general``), is all zero, or
        is a linear combination of the grand-mean row and the rows before it.
    """
    k = rows.shape[1]
    if not allow_general:
        for i, (name, row) in enumerate(zip(labels, rows, strict=True)):
            total = float(row.sum())
            if abs(total) > _SUM_TOL * max(1.0, float(np.abs(row).sum())):
                raise ContrastError(
                    f"contrast {name!r} (row {i + 1}) has weights summing to {total:g}, not 0; a "
                    "contrast compares cell means, so its weights must sum to zero. Fix the "
                    "weights, or pass allow_general=True to accept a general linear function of "
                    "the cell means"
                )
    stacked = [np.full(k, 1.0 / np.sqrt(k))]  # unit-norm mean row; rank needs equal scales
    for i, (name, row) in enumerate(zip(labels, rows, strict=True)):
        norm = float(np.linalg.norm(row))
        if norm == 0.0:
            raise ContrastError(f"contrast {name!r} (row {i + 1}) has all weights zero; "
                                "give it at least two non-zero weights")
        stacked.append(row / norm)
        if np.linalg.matrix_rank(np.vstack(stacked)) < len(stacked):
            earlier = ", ".join(repr(n) for n in labels[:i]) or "none"
            raise ContrastError(
                f"contrast {name!r} (row {i + 1}) is a linear combination of the grand-mean row "
                f"and the earlier contrasts ({earlier}), so it asks nothing new; drop it or "
                "replace it with an independent contrast"
            )


def build_coding(rows: np.ndarray) -> np.ndarray:
    """Full coding ``T`` from contrast rows ``L`` (``m x k``, already checked).

    ``H = [1/k * 1'; L]`` is the hypothesis matrix; ``T = H^{-1}`` when
    ``m = k - 1`` and ``T = pinv(H) = H'(HH')^{-1}`` otherwise. ``T`` is
    ``k x (m + 1)``; its first column is the constant 1 whenever every row of
    ``L`` sums to zero (then ``1/k * 1'`` is orthogonal to the rows of ``L``),
    and it is then set to exact ones. The remaining ``m`` columns are the
    coding used next to an intercept.
    """
    m, k = rows.shape
    hyp = np.vstack([np.full(k, 1.0 / k), rows])
    full = np.linalg.inv(hyp) if m == k - 1 else np.linalg.pinv(hyp)
    if np.allclose(rows.sum(axis=1), 0.0, atol=_SUM_TOL * max(1.0, float(np.abs(rows).max()))):
        full[:, 0] = 1.0
    full[np.abs(full) < 1e-13 * float(np.abs(full).max())] = 0.0
    return full
