"""Sums-of-squares tables of three kinds, every row an explicit comparison of two named models.

For a term ``T`` each kind fixes a *smaller* model without ``T`` and a
*larger* model with it; the row's sum of squares is
``SS = RSS(smaller) - RSS(larger)`` on ``df = rank(larger) - rank(smaller)``,
and ``F = (SS / df) / s^2`` with ``s^2`` the residual mean square of the full
model, ``p = P(F_{df, df_res} > F)`` (Seber & Lee, *Linear Regression
Analysis*, 2nd ed., 2003, sec. 4.3, from memory).

``sequential``
    Terms in formula order; the smaller model holds the terms before ``T``
    (type I sums of squares). One factorisation serves the whole chain
    (:func:`nestfit.linalg.sequential_ss`).
``marginal``
    The smaller model holds every term that does not contain ``T``; the larger
    adds ``T`` (type II; Langsrud, *Statistics and Computing* 13, 2003, 163-167,
    from memory). Every model compared respects marginality, so no coding
    choice enters.
``each-last``
    The smaller model is the full model without ``T``'s columns; the larger is
    the full model (type III). Which hypothesis that tests depends on the
    coding of the factors, so it is computed with sum-to-zero (Deviation)
    coding of every factor whatever the formula says; it then tests equality of
    unweighted marginal means when no cell is empty.

For one row the extra sum of squares comes from
``sequential_ss(X[:, smaller + T], y, [p_smaller, p_T])``: the term's block is
orthogonalised against the smaller model's columns and ``SS = ||Q_T' r||^2``,
without the cancellation of a difference of two residual sums of squares.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._compare import Comparison, compare
from nestfit._fit import Fit
from nestfit.design._design import Design
from nestfit.errors import ModelError, ZeroResidualDfWarning
from nestfit.linalg import sequential_ss

if TYPE_CHECKING:
    from nestfit.tables._models import FactorialModels

__all__ = ["KINDS", "SumsOfSquaresTable", "TermTest", "sums_of_squares"]

#: The three kinds of table.
KINDS = ("sequential", "marginal", "each-last")

_DESCRIPTION = {
    "sequential": "each term added to the terms before it in the formula",
    "marginal": "each term added to every term that does not contain it",
    "each-last": "each term removed from the full model, sum-to-zero coding",
}


@dataclass(frozen=True, eq=False)
class TermTest:
    """One row of a sums-of-squares table: a term tested by comparing two nested models.

    Attributes
    ----------
    term : str
        The term tested, e.g. ``"C(a):C(b)"``.
    smaller_model, larger_model : str
        Names of the two models (``"1 + C(a) + C(b)"``); for the each-last
        kind they end in ``"[sum-to-zero]"``.
    df : int
        ``rank(larger) - rank(smaller)``; below :attr:`columns` when cells are
        empty (some of the term's columns are aliased), 0 when none is left.
    ss : float
        ``RSS(smaller) - RSS(larger)``.
    mean_square : float
        ``ss / df``.
    f : float
        ``mean_square / s^2``, ``s^2`` the full model's residual mean square.
    p : float
        ``P(F_{df, residual_df} > f)``.
    columns : int
        The number of design columns of the term.
    note : str
        Why a row is not the usual test (empty cells, aliased columns), or ``""``.
    smaller_design, larger_design : Design
        The two designs (column subsets of the full design).
    """

    term: str
    smaller_model: str
    larger_model: str
    df: int
    ss: float
    mean_square: float
    f: float
    p: float
    columns: int
    note: str = ""
    smaller_design: Design | None = field(default=None, repr=False)
    larger_design: Design | None = field(default=None, repr=False)
    _models: Any = field(default=None, repr=False)

    def models(self) -> tuple[Fit, Fit]:
        """The two fits compared, smaller first (:func:`nestfit.compare` on them gives ``ss``)."""
        assert self.smaller_design is not None and self.larger_design is not None
        return self._models.fit(self.smaller_design), self._models.fit(self.larger_design)

    def comparison(self) -> Comparison:
        """This row as a :func:`nestfit.compare` chain whose first step reproduces the row.

        The chain is ``smaller -> larger``, followed by ``larger -> full`` when
        the larger model is not the full model, so that the F test uses the
        full model's residual mean square, as the table does.
        """
        small, large = self.models()
        full = self._models.full
        if large.rank == full.rank:
            return compare(small, large)
        return compare(small, large, full)

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"term": self.term, "smaller_model": self.smaller_model,
                "larger_model": self.larger_model, "df": self.df, "ss": self.ss,
                "mean_square": _finite(self.mean_square), "f": _finite(self.f),
                "p": _finite(self.p), "note": self.note}


@dataclass(frozen=True, eq=False)
class SumsOfSquaresTable:
    """A sums-of-squares table: one explicit model comparison per term.

    Attributes
    ----------
    kind : {"sequential", "marginal", "each-last"}
        Which smaller and larger model each row compares (module notes).
    response_name : str
        The response.
    n_obs : int
        Observations used.
    full_model : str
        The full model's name.
    rows : tuple of TermTest
        One per term other than the intercept, in formula order.
    residual_df, residual_ss : int, float
        The full model's residual degrees of freedom and sum of squares.
    total_ss : float
        ``sum (y_i - ybar)^2``, the residual sum of squares of the model ``1``.
    coding : str
        ``"as given"`` or ``"sum-to-zero (deviation) for every factor"``.
    empty_cells : tuple of str
        Cells of crossed factors with no observations (``"a=2, b=3"``).
    aliased : tuple of str
        Columns of the full model the fitter found aliased.
    notes : tuple of str
        What to keep in mind reading this table.
    """

    kind: str
    response_name: str
    n_obs: int
    full_model: str
    rows: tuple[TermTest, ...]
    residual_df: int
    residual_ss: float
    total_ss: float
    coding: str
    empty_cells: tuple[str, ...] = ()
    aliased: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def residual_ms(self) -> float:
        """``residual_ss / residual_df`` (NaN without residual df)."""
        return self.residual_ss / self.residual_df if self.residual_df > 0 else math.nan

    @property
    def model_ss(self) -> float:
        """``total_ss - residual_ss``: what the full model explains beyond the mean."""
        return self.total_ss - self.residual_ss

    @property
    def description(self) -> str:
        """What the smaller and larger model of each row are, in words."""
        return _DESCRIPTION[self.kind]

    def row(self, term: str) -> TermTest:
        """The row of one term."""
        for r in self.rows:
            if r.term == term:
                return r
        terms = ", ".join(r.term for r in self.rows)
        raise KeyError(f"no row for term {term!r}; the rows are {terms}")

    def to_frame(self) -> pd.DataFrame:
        """One row per term: smaller_model, larger_model, df, ss, mean_square, f, p."""
        return pd.DataFrame(
            [{"smaller_model": r.smaller_model, "larger_model": r.larger_model, "df": r.df,
              "ss": r.ss, "mean_square": r.mean_square, "f": r.f, "p": r.p} for r in self.rows],
            index=pd.Index([r.term for r in self.rows], name="term"),
        )

    def to_dict(self) -> dict[str, Any]:
        """``{"kind", "rows": [...], "residual": {"df", "ss"}, ...}`` (JSON-ready)."""
        return {
            "kind": self.kind,
            "response": self.response_name,
            "n_obs": self.n_obs,
            "full_model": self.full_model,
            "coding": self.coding,
            "rows": [r.to_dict() for r in self.rows],
            "residual": {"df": self.residual_df, "ss": self.residual_ss},
            "total": {"df": self.n_obs - 1, "ss": self.total_ss},
            "empty_cells": list(self.empty_cells),
            "aliased": list(self.aliased),
            "notes": list(self.notes),
        }

    def __str__(self) -> str:
        from nestfit.tables._format import format_table

        return format_table(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))


def _finite(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def f_test(ss: float, df: int, residual_ss: float, residual_df: int) -> tuple[float, float, float]:
    """``(mean_square, F, p)`` of an extra sum of squares against a residual.

    ``F = (ss / df) / (residual_ss / residual_df)``, ``p = P(F_{df, residual_df} > F)``.
    No test (NaN) when ``df = 0`` or ``residual_df = 0``; a perfect fit of the
    full model makes any positive extra sum of squares infinitely significant.
    """
    if df <= 0:
        return math.nan, math.nan, math.nan
    ms = ss / df
    if residual_df <= 0:
        return ms, math.nan, math.nan
    den = residual_ss / residual_df
    if den > 0:
        f = ms / den
        return ms, f, float(stats.f.sf(f, df, residual_df))
    return (ms, math.inf, 0.0) if ss > 0 else (ms, math.nan, math.nan)


def extra_ss_of_term(x: np.ndarray, y: np.ndarray, small: Sequence[int],
                     term: Sequence[int]) -> tuple[int, float]:
    """``(df, SS)`` of adding columns ``term`` to columns ``small`` of ``x`` (one factorisation)."""
    chain = sequential_ss(x[:, [*small, *term]], y, [len(small), len(term)])
    return int(chain.df[1]), float(chain.extra_ss[1])


def _row_note(df: int, columns: int, cells_note: str) -> str:
    if df == 0:
        return ("not testable: every column of the term is aliased with the smaller model "
                "(no observations to estimate it)")
    notes = [cells_note] if cells_note else []
    if df < columns:
        notes.insert(0, f"tested on {df} of its {columns} columns: the rest are aliased "
                        "(empty cells)")
    return "; ".join(notes)


def sums_of_squares(models: FactorialModels, kind: str = "marginal") -> SumsOfSquaresTable:
    """The sums-of-squares table of one kind for a :class:`FactorialModels`.

    Parameters
    ----------
    models : FactorialModels
        The full model and its structure (from :func:`nestfit.tables.factorial`).
    kind : {"sequential", "marginal", "each-last"}
        Which comparison each row makes (module notes). Default ``"marginal"``,
        which respects marginality and does not depend on the order of terms
        or on the coding.

    Returns
    -------
    SumsOfSquaresTable

    Raises
    ------
    ModelError
        An unknown kind; for ``"each-last"``, a coding that sum-to-zero
        recoding would change (it restricts the means).

    Notes
    -----
    Every row is ``SS = RSS(smaller) - RSS(larger)`` for the two models it
    names, and every F uses the full model's residual mean square. With
    balanced data (equal counts in every cell) the three kinds agree. The
    sequential rows add up to the model sum of squares ``total_ss - residual_ss``.
    """
    if kind not in KINDS:
        raise ModelError(f"kind must be one of {', '.join(KINDS)}. Got {kind!r} instead.")
    terms = models.terms
    order = list(terms.formula_order)
    x = models.design.to_dense()
    y = models.y
    blocks = [terms.term(n) for n in order]
    chain = sequential_ss(x[:, [j for t in blocks for j in t.columns]], y,
                          [len(t.columns) for t in blocks])
    residual_ss, residual_df = float(chain.rss[-1]), int(chain.df_residual[-1])
    total_ss = float(chain.rss[0])  # the first block is the intercept
    if residual_df <= 0:
        warnings.warn(
            f"model {models.name!r} has no residual degrees of freedom ({models.n_obs} "
            f"observations, rank {chain.rank}): the table has no F tests",
            ZeroResidualDfWarning, stacklevel=3,
        )
    cells = models.cells
    sum_to_zero = kind == "each-last"
    xs = models.sum_to_zero_design.to_dense() if sum_to_zero else x
    rows = []
    for j, name in enumerate(order):
        t = terms.term(name)
        if t.is_intercept:
            continue
        if kind == "sequential":
            smaller = order[:j]
            df, ss = int(chain.df[j]), float(chain.extra_ss[j])
        else:
            if kind == "marginal":
                smaller = [n for n in order if n != name and not terms.term(n).contains(t)]
            else:
                smaller = [n for n in order if n != name]
            df, ss = extra_ss_of_term(xs, y, models.columns_of(smaller), t.columns)
        ms, f, p = f_test(ss, df, residual_ss, residual_df)
        larger = [*smaller, name]
        note = _row_note(df, len(t.columns), cells.each_last_note(t) if sum_to_zero else "")
        rows.append(TermTest(
            term=name,
            smaller_model=models.model_name(smaller, sum_to_zero=sum_to_zero),
            larger_model=models.model_name(larger, sum_to_zero=sum_to_zero),
            df=df, ss=ss, mean_square=ms, f=f, p=p, columns=len(t.columns), note=note,
            smaller_design=models.design_of(smaller, sum_to_zero=sum_to_zero),
            larger_design=models.design_of(larger, sum_to_zero=sum_to_zero),
            _models=models,
        ))
    return SumsOfSquaresTable(
        kind=kind, response_name=models.response_name, n_obs=models.n_obs,
        full_model=models.name + (" [sum-to-zero]" if sum_to_zero else ""),
        rows=tuple(rows), residual_df=residual_df, residual_ss=residual_ss, total_ss=total_ss,
        coding="sum-to-zero (deviation) for every factor" if sum_to_zero else "as given",
        empty_cells=cells.empty, aliased=cells.aliased, notes=tuple(_notes(kind, models, cells)),
    )


def _notes(kind: str, models: FactorialModels, cells: Any) -> list[str]:
    notes = []
    if kind == "sequential":
        notes.append("Sequential rows depend on the order of the terms: each term is adjusted "
                     "only for the terms before it. They add up to the model sum of squares.")
    elif kind == "marginal":
        notes.append("Each term is adjusted for every term that does not contain it; a term "
                     "contained in an interaction is not adjusted for that interaction.")
    else:
        notes.append("Each-last rows use sum-to-zero (deviation) coding for every factor, "
                     "whatever coding the formula gives. Each smaller model is the full design "
                     "with the term's columns removed; it is not the same as refitting a formula "
                     "without the term.")
    if cells.empty:
        notes.append(f"{len(cells.empty)} cell(s) have no observations: "
                     f"{'; '.join(cells.empty)}.")
    if cells.aliased:
        notes.append("Aliased (not estimable) columns of the full model: "
                     f"{', '.join(cells.aliased)}.")
    contained = [r for r in models.model_terms
                 if any(models.terms.term(o).contains(models.terms.term(r))
                        for o in models.model_terms)]
    if contained:
        notes.append(f"{', '.join(contained)} also appear(s) inside an interaction: a test of "
                     "such a term averages over the levels of the other factors and can mislead "
                     "when the interaction is real; look at the interaction first.")
    return notes
