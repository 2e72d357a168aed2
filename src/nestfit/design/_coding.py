"""Codings: how the levels of a factor become design columns.

A coding turns the ``k`` levels of a factor into a ``k x p`` *coding matrix*
``C`` (rows: levels; columns: design columns). What each coefficient
estimates is read from the *hypothesis matrix* ``pinv([1, C])`` (or
``pinv(C)`` without an intercept): rows are weights on the cell means. See
``docs/coding-vs-hypotheses.md``.

Conventions: ``full_rank=False`` (the model has an intercept) gives the
``k - 1`` contrast columns. ``full_rank=True`` (no separate intercept) gives
the identity for :class:`Indicator`; every contrast coding gives a column of
ones followed by the same ``k - 1`` contrast columns, so each contrast keeps
its meaning and the constant's coefficient is what the intercept would have
been -- the baseline mean for :class:`Reference` (labelled by the baseline
level), the unweighted mean of the cell means otherwise (labelled
``"mean"``). Column labels name what the coefficient estimates: ``"B-A"``,
``"A-mean"``, ``"C-mean(A,B)"``, ``"linear"``...

References
----------
Venables, W. N. & Ripley, B. D. (2002). Modern Applied Statistics with S,
4th ed., Springer, sec. 6.2 (section number from memory).
Schad, D. J., Vasishth, S., Hohenstein, S. & Kliegl, R. (2020). How to
capitalize on a priori contrasts in linear (mixed) models: A tutorial.
Journal of Memory and Language, 110, 104038 (article number from memory).
"""

from __future__ import annotations

import abc
import inspect
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
import patsy

from nestfit.design import _coding_custom as _custom
from nestfit.design._coding_custom import CodingMatrix, check_levels
from nestfit.errors import ContrastError, FactorError

__all__ = [
    "Coding", "CodingMatrix", "Deviation", "FromHypotheses", "Helmert", "Indicator",
    "Polynomial", "Reference", "SuccessiveDifferences", "coding_from_name",
]


def _level_index(levels: tuple[str, ...], level: Any, arg: str, coding: str) -> int:
    if str(level) not in levels:
        raise FactorError(f"unknown {arg} level {str(level)!r} for {coding} coding; the levels "
                          f"are {', '.join(levels)}. Pass one of them as {arg}=..., or None for "
                          "the default")
    return levels.index(str(level))


class Coding(abc.ABC):
    """How the levels of a factor become design columns.

    Subclasses implement :meth:`_contrasts` (the ``k - 1`` columns used next
    to an intercept); :meth:`matrix` validates the levels and, for
    ``full_rank=True``, prepends a column of ones unless the subclass
    overrides :meth:`_full_rank`. The patsy methods make every coding usable
    inside formulas, e.g. ``C(g, Helmert())``.
    """

    label: ClassVar[str] = "coding"

    def matrix(self, levels: Sequence[str], *, full_rank: bool) -> CodingMatrix:
        """The coding matrix for ``levels``.

        Parameters
        ----------
        levels : sequence of str
            The factor levels in order (at least two, unique).
        full_rank : bool
            ``True``: the model has no separate intercept; return ``k``
            columns spanning all ``k`` cell means. ``False``: the model has an
            intercept; return the ``k - 1`` contrast columns.

        Raises
        ------
        FactorError
            Fewer than two levels, duplicated levels, or an unknown level
            argument (baseline, omit).
        ContrastError
            Arguments that do not fit the levels (spacing, degree, contrasts).
        """
        lv = check_levels(levels)
        mat, labels = self._full_rank(lv) if full_rank else self._contrasts(lv)
        return CodingMatrix(lv, mat, tuple(labels), self.label, full_rank=full_rank)

    @abc.abstractmethod
    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        """The contrast columns (model with an intercept) and their labels."""

    def _constant_label(self, levels: tuple[str, ...]) -> str:
        return "mean"

    def _full_rank(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        cols, labels = self._contrasts(levels)
        return (np.column_stack([np.ones(len(levels)), cols]),
                [self._constant_label(levels), *labels])

    def code_with_intercept(self, levels: Sequence[Any]) -> patsy.ContrastMatrix:
        """patsy protocol: the model has no intercept, so return the full-rank coding."""
        return self.matrix(levels, full_rank=True).to_contrast_matrix()

    def code_without_intercept(self, levels: Sequence[Any]) -> patsy.ContrastMatrix:
        """patsy protocol: the model has an intercept, so return the ``k - 1`` contrasts."""
        return self.matrix(levels, full_rank=False).to_contrast_matrix()


@dataclass(frozen=True)
class Reference(Coding):
    """Reference (treatment) coding: each level against a baseline level.

    Column for level ``l`` is the indicator of ``l``; the coefficient
    estimates ``mean(l) - mean(baseline)``, the intercept ``mean(baseline)``.
    For ``k = 3`` with baseline ``A`` (columns ``B-A``, ``C-A``)::

        A  0 0        hypothesis rows:  intercept   1 0 0
        B  1 0                          B-A        -1 1 0
        C  0 1                          C-A        -1 0 1

    With ``full_rank=True`` a constant column labelled by the baseline level
    comes first (its coefficient is the baseline mean).

    Parameters
    ----------
    baseline : str, optional
        The baseline level's label; default the first level.

    References
    ----------
    Venables & Ripley (2002), MASS 4th ed., sec. 6.2 (from memory).
    """

    baseline: str | None = None
    label = "reference"

    def _base(self, levels: tuple[str, ...]) -> int:
        if self.baseline is None:
            return 0
        return _level_index(levels, self.baseline, "baseline", self.label)

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        base = self._base(levels)
        keep = [i for i in range(len(levels)) if i != base]
        return np.eye(len(levels))[:, keep], [f"{levels[i]}-{levels[base]}" for i in keep]

    def _constant_label(self, levels: tuple[str, ...]) -> str:
        return levels[self._base(levels)]


@dataclass(frozen=True)
class Indicator(Coding):
    """Indicator (cell-means) coding: one 0/1 column per level.

    With ``full_rank=True`` the matrix is the ``k x k`` identity and each
    coefficient is one cell mean (columns labelled by the levels). With
    ``full_rank=False`` one indicator must go, and the result is exactly
    :class:`Reference` coding on the first level (columns ``B-A``, ``C-A``...;
    :attr:`CodingMatrix.coding` stays ``"indicator"``). For ``k = 3``::

        full rank:  A 1 0 0    with intercept:  A 0 0
                    B 0 1 0                     B 1 0
                    C 0 0 1                     C 0 1
    """

    label = "indicator"

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        return Reference()._contrasts(levels)

    def _full_rank(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        return np.eye(len(levels)), list(levels)


@dataclass(frozen=True)
class Deviation(Coding):
    """Deviation (sum-to-zero) coding: each level against the mean of all levels.

    The column for a kept level ``l`` is its indicator minus the indicator of
    the omitted level; the coefficient estimates ``mean(l) - m``, ``m`` the
    unweighted mean of the ``k`` cell means, and the intercept estimates ``m``.
    The omitted level's deviation is minus the sum of the others. For
    ``k = 3``, omitting ``C`` (columns ``A-mean``, ``B-mean``)::

        A  1  0       hypothesis rows:  intercept  1/3  1/3  1/3
        B  0  1                         A-mean     2/3 -1/3 -1/3
        C -1 -1                         B-mean    -1/3  2/3 -1/3

    Parameters
    ----------
    omit : str, optional
        The level without a column of its own; default the last level.

    References
    ----------
    Venables & Ripley (2002), MASS 4th ed., sec. 6.2 (from memory).
    """

    omit: str | None = None
    label = "deviation"

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        k = len(levels)
        omit = k - 1 if self.omit is None else _level_index(levels, self.omit, "omit", self.label)
        keep = [i for i in range(k) if i != omit]
        cols = np.eye(k)[:, keep]
        cols[omit, :] = -1.0
        return cols, [f"{levels[i]}-mean" for i in keep]


def _helmert_label(levels: tuple[str, ...], j: int) -> str:
    if j == 1:
        return f"{levels[1]}-{levels[0]}"
    inner = ",".join(levels[:j]) if j == 2 else f"{levels[0]}..{levels[j - 1]}"
    return f"{levels[j]}-mean({inner})"


@dataclass(frozen=True)
class Helmert(Coding):
    """Helmert coding: each level against the mean of the levels before it.

    Coefficient ``j`` (``j = 1..k-1``) estimates exactly
    ``mean(level j+1) - (mean(level 1) + ... + mean(level j)) / j``; the
    intercept estimates the unweighted mean of the cell means. Column ``j``
    holds ``-1/(j+1)`` for levels ``1..j``, ``j/(j+1)`` for level ``j+1`` and
    0 after it. For ``k = 4`` (columns ``B-A``, ``C-mean(A,B)``,
    ``D-mean(A..C)``)::

        A  -1/2  -1/3  -1/4
        B   1/2  -1/3  -1/4
        C    0    2/3  -1/4
        D    0     0    3/4

    The columns are those of the classical (unscaled) Helmert contrasts, whose
    column ``j`` is ``(-1, ..., -1, j, 0, ..., 0)``, divided by ``j + 1``; the
    scaling makes each coefficient the difference itself rather than that
    difference divided by ``j + 1``. Same column space, same fit.

    References
    ----------
    Venables & Ripley (2002), MASS 4th ed., sec. 6.2 (from memory);
    Schad et al. (2020), J. Memory and Language 110 (scaled Helmert
    contrasts; from memory).
    """

    label = "helmert"

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        k = len(levels)
        cols = np.zeros((k, k - 1))
        for j in range(1, k):
            cols[:j, j - 1] = -1.0 / (j + 1)
            cols[j, j - 1] = j / (j + 1)
        return cols, [_helmert_label(levels, j) for j in range(1, k)]


def _poly_label(degree: int) -> str:
    return {1: "linear", 2: "quadratic", 3: "cubic"}.get(degree, f"degree {degree}")


@dataclass(frozen=True)
class Polynomial(Coding):
    """Orthogonal polynomial coding over numeric scores of the ordered levels.

    With scores ``x`` (``spacing``; default ``0, 1, ..., k-1``), centre and
    scale them to ``z``, form the Vandermonde matrix ``V = [1, z, z^2, ...,
    z^d]`` and take its QR decomposition ``V = QR`` with ``diag(R) > 0``.
    Columns ``1..d`` of ``Q`` are the coding: orthonormal, orthogonal to the
    constant, the linear column proportional to ``x - mean(x)`` and increasing,
    and each column of degree ``j`` a polynomial of degree ``j`` in ``x``. As
    the columns are orthonormal and sum to zero, the hypothesis rows are the
    columns themselves (``coef_j = q_j' mu``) and the intercept row is
    ``1/k``. For ``k = 4`` equally spaced::

        linear     (-3, -1,  1, 3) / sqrt(20)
        quadratic  ( 1, -1, -1, 1) / 2
        cubic      (-1,  3, -3, 1) / sqrt(20)

    Parameters
    ----------
    spacing : sequence of float, optional
        One score per level, in level order, finite and strictly increasing
        (e.g. doses ``[0, 1, 2, 4]``).
    degree : int, optional
        Highest degree, ``1 <= degree <= k - 1``; default ``k - 1``. A smaller
        degree gives a reduced trend coding with ``degree`` columns (the model
        then restricts the cell means to a polynomial trend).

    References
    ----------
    Venables & Ripley (2002), MASS 4th ed., sec. 6.2 (from memory).
    """

    spacing: Sequence[float] | None = None
    degree: int | None = None
    label = "polynomial"

    def __post_init__(self) -> None:
        if self.spacing is not None:
            object.__setattr__(self, "spacing", _custom.check_spacing(self.spacing))
        if self.degree is not None:
            ok = isinstance(self.degree, (int, np.integer)) and not isinstance(self.degree, bool)
            if not ok or self.degree < 1:
                raise ContrastError(f"degree must be a whole number >= 1, got {self.degree!r}")
            object.__setattr__(self, "degree", int(self.degree))

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        k = len(levels)
        x = np.arange(k, dtype=float) if self.spacing is None else np.asarray(self.spacing)
        if x.size != k:
            raise ContrastError(f"spacing has {x.size} values but the factor has {k} levels "
                                f"({', '.join(levels)}); expected {k} scores, one per level")
        degree = k - 1 if self.degree is None else self.degree
        if degree > k - 1:
            raise ContrastError(f"degree {degree} is out of range for {k} levels; it must be "
                                f"between 1 and k - 1 = {k - 1}")
        z = x - x.mean()
        z /= np.abs(z).max()
        q, r = np.linalg.qr(z[:, np.newaxis] ** np.arange(degree + 1))
        q = q * np.sign(np.diag(r))
        return q[:, 1:], [_poly_label(d) for d in range(1, degree + 1)]


@dataclass(frozen=True)
class SuccessiveDifferences(Coding):
    """Successive-differences coding: each level against the one before it.

    Coefficient ``j`` estimates ``mean(level j+1) - mean(level j)``; the
    intercept estimates the unweighted mean of the cell means. Column ``j``
    holds ``-(k-j)/k`` for levels ``1..j`` and ``j/k`` for levels after. For
    ``k = 3`` (columns ``B-A``, ``C-B``)::

        A  -2/3  -1/3      hypothesis rows:  intercept  1/3 1/3 1/3
        B   1/3  -1/3                        B-A        -1   1   0
        C   1/3   2/3                        C-B         0  -1   1

    References
    ----------
    Venables & Ripley (2002), MASS 4th ed., sec. 6.2 (repeated-differences
    contrasts; from memory).
    """

    label = "successive"

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        k = len(levels)
        rows = np.arange(k)[:, np.newaxis]
        j = np.arange(1, k)[np.newaxis, :]
        cols = np.where(rows < j, -(k - j) / k, j / k)
        return cols, [f"{levels[i]}-{levels[i - 1]}" for i in range(1, k)]


class FromHypotheses(Coding):
    """The coding whose coefficients are the contrasts you ask for.

    Give the contrasts as weights on the cell means, ``L`` (``m x k``,
    ``m <= k - 1``). With the grand-mean row on top, the hypothesis matrix is
    ``H = [1/k * 1'; L]``; the full coding is ``T = H^{-1}`` (``pinv(H)`` when
    ``m < k - 1``), whose first column is the constant when the rows of ``L``
    sum to zero. ``full_rank=False`` returns ``T`` without that column, so that
    with an intercept the intercept estimates the mean of the cell means and
    coefficient ``i`` estimates ``L[i] @ mu``. ``full_rank=True`` returns
    ``T`` itself (first column ``"mean"``). E.g. for levels ``A B C`` and the
    contrasts ``B-A = (-1, 1, 0)`` and ``C-mean(A,B) = (-1/2, -1/2, 1)`` the
    result is the :class:`Helmert` coding.

    When ``m = k - 1`` the coefficients of a least-squares fit are exactly
    ``L @ ybar`` (sample cell means) for any group sizes. When ``m < k - 1``
    the model also restricts the cell means (``k - 1 - m`` fewer parameters);
    the coefficients are then ``L @ ybar`` exactly for balanced groups, and a
    count-weighted version otherwise (:meth:`CodingMatrix.hypothesis_matrix`
    with ``weights=`` shows it). Complete ``L`` to ``k - 1`` rows to get exact
    contrasts in unbalanced data.

    Parameters
    ----------
    contrasts : array-like or mapping
        An ``(m, k)`` array (one row per contrast, weights in level order),
        or a mapping ``label -> {level: weight}`` (levels left out weigh 0),
        or a mapping ``label -> sequence of k weights``.
    labels : sequence of str, optional
        Labels for the rows of an array; default ``"c1", "c2", ...``.
    allow_general : bool, default False
        Accept rows that do not sum to zero (general linear functions of the
        cell means). ``full_rank=True`` then still gives exactly
        ``(mean, L @ mu)``, but its first column is no longer constant, and
        next to an intercept row ``i`` is estimated in centred form
        ``L[i] - mean(L[i])``.

    Raises
    ------
    ContrastError
        Malformed input; at :meth:`matrix` time also a row with the wrong
        number of weights or an unknown level, a row that does not sum to
        zero, or a row that depends on the mean row and the earlier rows.

    References
    ----------
    Schad et al. (2020), J. Memory and Language 110 (from memory).
    """

    label = "hypotheses"

    def __init__(self, contrasts: Any, *, labels: Sequence[str] | None = None,
                 allow_general: bool = False) -> None:
        self.contrast_labels, self._rows = _custom.parse_contrasts(contrasts, labels)
        self.allow_general = bool(allow_general)

    def __repr__(self) -> str:
        return (f"FromHypotheses({dict(zip(self.contrast_labels, self._rows, strict=True))!r}, "
                f"allow_general={self.allow_general})")

    def contrast_matrix(self, levels: Sequence[str]) -> np.ndarray:
        """The requested contrasts ``L`` laid out on ``levels`` (checked)."""
        lv = check_levels(levels)
        rows = _custom.rows_for_levels(self.contrast_labels, self._rows, lv)
        _custom.check_contrasts(self.contrast_labels, rows, allow_general=self.allow_general)
        return rows

    def _full_rank(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        return _custom.build_coding(self.contrast_matrix(levels)), ["mean", *self.contrast_labels]

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        full, labels = self._full_rank(levels)
        return full[:, 1:], labels[1:]


_BY_NAME: Mapping[str, type[Coding]] = {
    "indicator": Indicator, "reference": Reference, "deviation": Deviation,
    "helmert": Helmert, "polynomial": Polynomial, "successive": SuccessiveDifferences,
}


def coding_from_name(name: str, **kwargs: Any) -> Coding:
    """The coding called ``name``, built with ``kwargs``.

    Parameters
    ----------
    name : str
        One of ``"indicator"``, ``"reference"``, ``"deviation"``,
        ``"helmert"``, ``"polynomial"``, ``"successive"`` (case-insensitive).
    **kwargs
        Passed to the class, e.g. ``baseline="B"`` for ``"reference"``.

    Raises
    ------
    ContrastError
        Unknown name (the message lists the valid ones) or an option the
        coding does not take.

    Examples
    --------
    >>> coding_from_name("reference", baseline="B")
    Reference(baseline='B')
    """
    key = name.strip().lower() if isinstance(name, str) else ""
    if key not in _BY_NAME:
        raise ContrastError(f"unknown coding {name!r}; valid names are "
                            f"{', '.join(sorted(_BY_NAME))}")
    cls = _BY_NAME[key]
    accepted = list(inspect.signature(cls).parameters)
    unknown = sorted(set(kwargs) - set(accepted))
    if unknown:
        takes = ", ".join(accepted) if accepted else "no options"
        raise ContrastError(f"coding {key!r} does not take {', '.join(unknown)}; it takes {takes}")
    return cls(**kwargs)
