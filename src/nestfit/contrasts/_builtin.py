"""Families of contrasts: a named set, given explicitly or built from the levels.

Built-in families (``k`` levels in order ``L1 .. Lk``):

==================  =========================================================  ========
family              contrasts                                                  count
==================  =========================================================  ========
all_pairs()         ``Li - Lj`` for every ``i < j``                              k(k-1)/2
versus_control(c)   ``Li - c`` for every level other than ``c``                 k - 1
versus_rest()       ``Li - mean(the other levels)`` (unweighted mean)           k
consecutive()       ``L(i+1) - Li`` (ordered levels)                           k - 1
trends(...)         orthogonal polynomial weights (linear, quadratic, ...)     degree
==================  =========================================================  ========

The trend weights are the columns of :class:`nestfit.design.Polynomial`
(orthonormal, summing to zero; scores from ``spacing``, default equally
spaced), so each estimate is the projection of the level means on that
polynomial; t and p do not depend on the scaling.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from nestfit.contrasts._contrast import Contrast, contrast
from nestfit.design._coding import Polynomial
from nestfit.errors import ContrastError, FactorError

__all__ = ["ContrastFamily", "all_pairs", "consecutive", "family", "trends", "versus_control",
           "versus_rest"]

KINDS = ("custom", "pairs", "control", "others", "consecutive", "trend")


@dataclass(frozen=True, eq=False)
class ContrastFamily:
    """A named set of contrasts, explicit or built from the factor's levels.

    Attributes
    ----------
    name : str
        Shown in results.
    kind : str
        ``"custom"``, ``"pairs"``, ``"control"``, ``"others"``,
        ``"consecutive"`` or ``"trend"``; some adjustments need a kind
        (Tukey: pairwise differences; Dunnett: many-to-one).
    contrasts : tuple of Contrast
        The contrasts of a custom family.
    control : str or None
        The control level of a ``"control"`` family.
    degree : int or None
        Highest degree of a ``"trend"`` family.
    spacing : tuple of float or None
        Level scores of a ``"trend"`` family.
    """

    name: str
    kind: str = "custom"
    contrasts: tuple[Contrast, ...] = ()
    control: str | None = None
    degree: int | None = None
    spacing: tuple[float, ...] | None = field(default=None, repr=False)

    def resolve(self, levels: Sequence[str]) -> tuple[Contrast, ...]:
        """The contrasts of the family for these levels.

        Raises
        ------
        FactorError
            An unknown control level.
        ContrastError
            Trend options that do not fit the levels, or a family with fewer
            than one contrast.
        """
        lv = tuple(str(x) for x in levels)
        if self.kind == "custom":
            out = self.contrasts
        elif self.kind == "pairs":
            out = tuple(_difference(lv[i], lv[j]) for i in range(len(lv))
                        for j in range(i + 1, len(lv)))
        elif self.kind == "control":
            assert self.control is not None
            if self.control not in lv:
                raise FactorError(f"control level {self.control!r} is not a level of the factor; "
                                  f"its levels are {', '.join(lv)}")
            out = tuple(_difference(x, self.control) for x in lv if x != self.control)
        elif self.kind == "others":
            out = tuple(_versus_rest(lv, i) for i in range(len(lv)))
        elif self.kind == "consecutive":
            out = tuple(_difference(lv[i + 1], lv[i]) for i in range(len(lv) - 1))
        else:
            coding = Polynomial(spacing=self.spacing, degree=self.degree)
            cm = coding.matrix(lv, full_rank=False)
            out = tuple(contrast(dict(zip(lv, np.asarray(cm.matrix)[:, j].tolist())),
                                 label=cm.column_labels[j])
                        for j in range(cm.matrix.shape[1]))
        if not out:
            raise ContrastError(f"family {self.name!r} has no contrasts for levels "
                                f"{', '.join(lv)}")
        return out


def _difference(a: str, b: str) -> Contrast:
    return contrast({a: 1.0, b: -1.0}, label=f"{a} - {b}")


def _versus_rest(levels: tuple[str, ...], i: int) -> Contrast:
    k = len(levels)
    weights = {lv: (1.0 if j == i else -1.0 / (k - 1)) for j, lv in enumerate(levels)}
    return contrast(weights, label=f"{levels[i]} - mean(others)")


def family(*contrasts: Any, name: str = "custom") -> ContrastFamily:
    """A custom family from contrasts (anything :func:`~nestfit.contrasts.contrast` accepts).

    Examples
    --------
    >>> fam = family("H4 - mean(...)", "spread = H1 - H6", name="planned")
    >>> [c.label for c in fam.contrasts]
    ['H4 - mean(...)', 'spread']
    """
    if len(contrasts) == 1 and isinstance(contrasts[0], (list, tuple)):
        contrasts = tuple(contrasts[0])
    if not contrasts:
        raise ContrastError("a family needs at least one contrast")
    built = tuple(contrast(c) for c in contrasts)
    labels = [c.label for c in built]
    twice = sorted({x for x in labels if labels.count(x) > 1})
    if twice:
        raise ContrastError(f"contrast label(s) {', '.join(map(repr, twice))} appear twice in "
                            "the family; give each contrast its own label")
    return ContrastFamily(str(name), "custom", built)


def all_pairs() -> ContrastFamily:
    """Every pairwise difference ``Li - Lj``, ``i < j`` (the family for Tukey-Kramer)."""
    return ContrastFamily("all pairs", "pairs")


def versus_control(control: Any) -> ContrastFamily:
    """Each other level minus the control level (the family for Dunnett's method)."""
    return ContrastFamily(f"each level against {control}", "control", control=str(control))


def versus_rest() -> ContrastFamily:
    """Each level minus the unweighted mean of all the other levels."""
    return ContrastFamily("each level against the rest", "others")


def consecutive() -> ContrastFamily:
    """Each level minus the one before it (for ordered levels)."""
    return ContrastFamily("consecutive levels", "consecutive")


def trends(degree: int | None = None, spacing: Sequence[float] | None = None) -> ContrastFamily:
    """Orthogonal polynomial trends over the ordered levels (linear, quadratic, ...).

    Parameters
    ----------
    degree : int, optional
        Highest degree, ``1 <= degree <= k - 1``; default ``k - 1``.
    spacing : sequence of float, optional
        A score per level (e.g. doses ``[0, 1, 2, 4]``); default equally spaced.
    """
    poly = Polynomial(spacing=spacing, degree=degree)  # checks the options now
    spaced = None if poly.spacing is None else tuple(float(x) for x in poly.spacing)
    return ContrastFamily("polynomial trends", "trend", degree=poly.degree, spacing=spaced)
