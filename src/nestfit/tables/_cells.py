"""Cells of a factorial model: counts, empty cells, and what remains estimable.

A *cell* is one combination of levels of the factors a term crosses. A term
``C(a):C(b)`` needs an observation in every ``a x b`` cell to estimate all its
columns; with empty cells some interaction columns are aliased, the
interaction is tested on fewer degrees of freedom, and the unweighted
marginal means that involve an empty cell are not estimable. Additive terms
need no full crossing: ``C(a) + C(b)`` estimates every cell mean as long as
the levels are connected.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from nestfit.errors import ModelError
from nestfit.tables._table import extra_ss_of_term
from nestfit.tables._terms import FactorInfo, TermInfo

if TYPE_CHECKING:
    from nestfit.tables._models import FactorialModels

__all__ = ["CellReport", "cell_label", "cell_report", "level_codes"]


def cell_label(factors: tuple[FactorInfo, ...], levels: tuple[int, ...]) -> str:
    """``"a=2, b=3"`` for level indices ``levels`` of ``factors``."""
    return ", ".join(f"{f.name}={f.level_labels[i]}" for f, i in zip(factors, levels))


def level_codes(models: FactorialModels, factor: FactorInfo) -> np.ndarray:
    """Index of each used row's level of a categorical factor.

    Raises
    ------
    ModelError
        The factor is an expression of several columns, so its cells cannot be formed.
    """
    if factor.variable is None:
        raise ModelError(
            f"factor {factor.code!r} is built from an expression, not one column, so its "
            "cells cannot be formed; put the factor in a column of its own"
        )
    values = models.frame[factor.variable]
    cat = pd.Categorical(values, categories=pd.Index(list(factor.levels), dtype=object))
    codes = np.asarray(cat.codes, dtype=np.intp)
    if codes.size and codes.min() < 0:
        cat = pd.Categorical(values.astype(str), categories=list(factor.level_labels))
        codes = np.asarray(cat.codes, dtype=np.intp)
    if codes.size and codes.min() < 0:  # pragma: no cover - patsy took its levels from these values
        raise ModelError(f"factor {factor.code!r}: some values are not among its levels")
    return codes


@dataclass(frozen=True)
class CrossedCells:
    """The cells of one set of crossed factors (the factors of a highest-order term)."""

    factors: tuple[str, ...]
    labels: tuple[str, ...]
    counts: tuple[int, ...]

    @property
    def empty(self) -> tuple[str, ...]:
        """Labels of the cells with no observations."""
        return tuple(lab for lab, n in zip(self.labels, self.counts) if n == 0)


@dataclass(frozen=True, eq=False)
class CellReport:
    """Which cells have data, which are empty, and which effects remain estimable.

    Attributes
    ----------
    crossings : tuple of CrossedCells
        For each highest-order set of crossed factors (``a x b`` for
        ``C(a) * C(b)``; ``a`` and ``b`` separately for ``C(a) + C(b)``), its
        cells and their counts.
    empty : tuple of str
        Labels of the empty cells of those crossings, ``"a=2, b=3"``.
    aliased : tuple of str
        Columns of the full model the fitter found aliased.
    term_df : tuple of (str, int, int)
        ``(term, columns, df)``: how many of a term's columns can be tested
        (its df in the marginal table).
    balanced : bool
        Every cell of every crossing has the same, nonzero count.
    uncounted : tuple of str
        Factors built from an expression of several columns, whose cells are
        not counted (aliased columns are still named).
    """

    crossings: tuple[CrossedCells, ...]
    empty: tuple[str, ...]
    aliased: tuple[str, ...]
    term_df: tuple[tuple[str, int, int], ...]
    balanced: bool
    uncounted: tuple[str, ...] = ()
    _affected: frozenset[str] = field(default=frozenset(), repr=False)

    def each_last_note(self, term: TermInfo) -> str:
        """The caution for an each-last row of a term inside a crossing with empty cells."""
        if term.name in self._affected:
            return ("empty cells: this row depends on the sum-to-zero coding and does not test "
                    "equal unweighted marginal means (those are not estimable)")
        return ""

    def to_frame(self) -> pd.DataFrame:
        """One row per cell of every crossing: factors, cell, count."""
        return pd.DataFrame(
            [{"factors": " x ".join(c.factors), "cell": lab, "count": n}
             for c in self.crossings for lab, n in zip(c.labels, c.counts)]
        )

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {
            "crossings": [{"factors": list(c.factors), "cells": list(c.labels),
                           "counts": list(c.counts)} for c in self.crossings],
            "empty": list(self.empty),
            "aliased": list(self.aliased),
            "terms": [{"term": t, "columns": k, "df": d} for t, k, d in self.term_df],
            "balanced": self.balanced,
            "uncounted": list(self.uncounted),
        }

    def __str__(self) -> str:
        from nestfit.tables._format import format_cells

        return format_cells(self)


def _crossings(models: FactorialModels) -> list[tuple[FactorInfo, ...]]:
    """The highest-order sets of categorical factors crossed by some term."""
    cat = {f.code: f for f in models.terms.categorical}
    sets: list[frozenset[str]] = []
    for t in models.terms.terms:
        s = frozenset(c for c in t.factor_codes if c in cat)
        if s and s not in sets:
            sets.append(s)
    top = [s for s in sets if not any(s < o for o in sets)]
    order = [f.code for f in models.terms.categorical]
    return [tuple(cat[c] for c in order if c in s) for s in top]


def _marginal_df(models: FactorialModels, name: str) -> int:
    """Rank added by a term to every term that does not contain it (its marginal-table df)."""
    term = models.terms.term(name)
    smaller = [n for n in models.terms.formula_order
               if n != name and not models.terms.term(n).contains(term)]
    df, _ = extra_ss_of_term(models.design.to_dense(), models.y, models.columns_of(smaller),
                             term.columns)
    return df


def cell_report(models: FactorialModels) -> CellReport:
    """Count the cells of every crossing, name the empty ones, give each term's testable df."""
    crossings = []
    affected: set[str] = set()
    uncounted: list[str] = []
    for factors in _crossings(models):
        if any(f.variable is None for f in factors):
            uncounted.extend(f.code for f in factors if f.variable is None)
            continue
        codes = [level_codes(models, f) for f in factors]
        dims = tuple(len(f.levels) for f in factors)
        counts = np.bincount(np.ravel_multi_index(codes, dims), minlength=int(np.prod(dims)))
        labels = [cell_label(factors, idx) for idx in itertools.product(*map(range, dims))]
        crossing = CrossedCells(tuple(f.name for f in factors), tuple(labels),
                                tuple(int(n) for n in counts))
        crossings.append(crossing)
        if crossing.empty:
            inside = frozenset(f.code for f in factors)
            for t in models.terms.terms:
                shared = t.factors & inside
                if shared and shared != inside:
                    affected.add(t.name)
    empty = tuple(lab for c in crossings for lab in c.empty)
    all_counts = [n for c in crossings for n in c.counts]
    balanced = (bool(all_counts) and not uncounted and min(all_counts) > 0
                and len(set(all_counts)) == 1)
    full_rank = models.full.rank == models.design.n_columns  # then every term keeps its df
    term_df = tuple((n, len(models.terms.term(n).columns),
                     len(models.terms.term(n).columns) if full_rank else _marginal_df(models, n))
                    for n in models.model_terms)
    return CellReport(tuple(crossings), empty, tuple(models.full.aliased), term_df, balanced,
                      tuple(dict.fromkeys(uncounted)), frozenset(affected))
