"""Term structure of a formula model: which factors each term holds, which columns it owns.

This module and :mod:`nestfit.design._formula` are the only places that talk to
patsy. patsy's description of a design (its terms, factors and categories) is
translated at once into our own metadata -- :class:`FactorInfo`,
:class:`TermInfo`, :class:`ModelTerms` -- so the tables, the cell analysis and
the means never touch patsy objects, with one exception: building design rows
for a grid of cells (:meth:`ModelTerms.design_rows`), which must reuse patsy's
memorised coding so that the rows match the fitted columns exactly.
"""

from __future__ import annotations

import ast
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd
import patsy

from nestfit.design._formula import _formula_names, _namespace
from nestfit.errors import ModelError

__all__ = ["FactorInfo", "ModelTerms", "TermInfo", "formula_factor_columns", "read_terms"]

INTERCEPT = "Intercept"


@dataclass(frozen=True)
class FactorInfo:
    """One factor of a formula: a categorical factor or a numeric covariate.

    Attributes
    ----------
    code : str
        The factor as written in the formula, e.g. ``"C(a)"``, ``"C(a, Sum)"``, ``"x"``.
    kind : {"categorical", "numeric"}
        How the formula uses it.
    variable : str or None
        The data column it is built from, when that is a single column
        (``"a"`` for ``C(a, Sum)``); ``None`` for an expression of several columns.
    levels : tuple
        The categories in model order (categorical factors), as patsy holds them.
    coding_given : bool
        Whether the code names a coding (``C(a, Sum)``, ``C(a, Helmert())``).
    """

    code: str
    kind: Literal["categorical", "numeric"]
    variable: str | None
    levels: tuple[Any, ...] = ()
    coding_given: bool = False

    @property
    def name(self) -> str:
        """The name shown in cell labels: the data column when there is one, else the code."""
        return self.variable if self.variable is not None else self.code

    @property
    def level_labels(self) -> tuple[str, ...]:
        """The levels as text."""
        return tuple(str(v) for v in self.levels)


@dataclass(frozen=True)
class TermInfo:
    """One model term: its name, the factors it multiplies, the design columns it owns.

    Attributes
    ----------
    name : str
        patsy's term name, e.g. ``"Intercept"``, ``"C(a)"``, ``"C(a):C(b)"``, ``"C(g):x"``.
    factor_codes : tuple of str
        Codes of the factors in the term, in the term's order (empty for the intercept).
    columns : tuple of int
        Indices of the term's columns in the full design.
    """

    name: str
    factor_codes: tuple[str, ...]
    columns: tuple[int, ...]

    @property
    def factors(self) -> frozenset[str]:
        """The factor codes as a set."""
        return frozenset(self.factor_codes)

    @property
    def is_intercept(self) -> bool:
        """True for the constant term."""
        return not self.factors

    def contains(self, other: TermInfo) -> bool:
        """Whether this term contains ``other``: its factors are a proper superset of ``other``'s.

        ``C(a):C(b)`` contains ``C(a)``, ``C(b)`` and the intercept; ``C(g):x``
        contains ``C(g)`` and ``x``. This is the marginality relation used by
        the marginal (type II) table.
        """
        return other.factors < self.factors


@dataclass(frozen=True, eq=False)
class ModelTerms:
    """The term structure of a fitted formula.

    Attributes
    ----------
    formula : str
        The formula as given.
    response : str
        The left-hand side.
    terms : tuple of TermInfo
        Terms in design-column order (patsy puts terms made only of factors
        first, then terms with covariates).
    formula_order : tuple of str
        The term names in formula order, the order of the sequential table:
        terms of lower order (fewer factors) first, and within one order as
        written (``"C(a)*C(b)*C(c)"`` gives a, b, c, a:b, a:c, b:c, a:b:c;
        ``"x + C(g)"`` keeps ``x`` first).
    factors : tuple of FactorInfo
        Every factor, in order of first appearance in the design.
    column_names : tuple of str
        Names of the full design's columns.
    """

    formula: str
    response: str
    terms: tuple[TermInfo, ...]
    formula_order: tuple[str, ...]
    factors: tuple[FactorInfo, ...]
    column_names: tuple[str, ...]
    rhs_variables: tuple[str, ...]
    _info: Any = field(repr=False, default=None)

    @property
    def has_intercept(self) -> bool:
        """Whether the model has a constant term."""
        return any(t.is_intercept for t in self.terms)

    def term(self, name: str) -> TermInfo:
        """The term called ``name``."""
        for t in self.terms:
            if t.name == name:
                return t
        known = ", ".join(t.name for t in self.terms)
        raise ModelError(f"the model has no term {name!r}; its terms are {known}")

    def factor(self, code: str) -> FactorInfo:
        """The factor with this code."""
        for f in self.factors:
            if f.code == code:
                return f
        raise ModelError(f"the model has no factor {code!r}")

    @property
    def categorical(self) -> tuple[FactorInfo, ...]:
        """The categorical factors."""
        return tuple(f for f in self.factors if f.kind == "categorical")

    @property
    def numeric(self) -> tuple[FactorInfo, ...]:
        """The numeric factors (covariates)."""
        return tuple(f for f in self.factors if f.kind == "numeric")

    def design_rows(self, grid: pd.DataFrame) -> np.ndarray:
        """Design rows of the fitted model for new data ``grid`` (patsy's memorised coding)."""
        try:
            (mat,) = patsy.build_design_matrices([self._info], grid, NA_action="raise")
        except patsy.PatsyError as exc:
            raise ModelError(f"cannot build design rows for {self.formula!r}: {exc}") from None
        return np.asarray(mat, dtype=np.float64)

    def sum_to_zero_formula(self) -> str:
        """The formula with every categorical factor recoded to sum-to-zero (Deviation) contrasts.

        Terms are written in design order, so patsy makes the same choices of
        full-rank and reduced codings as for the original formula.
        """
        recoded = {f.code: _deviation_code(f.code) for f in self.categorical}
        parts = ["1"]
        for t in self.terms:
            if not t.is_intercept:
                parts.append(":".join(recoded.get(c, c) for c in t.factor_codes))
        return f"{self.response} ~ " + " + ".join(parts)


def _parse_code(code: str) -> ast.expr | None:
    try:
        tree = ast.parse(code, mode="eval")
    except SyntaxError:
        return None
    return tree.body


def _is_c_call(node: ast.expr | None) -> bool:
    return (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
            and node.func.id == "C" and len(node.args) >= 1)


def _factor_variable(code: str, columns: Sequence[str]) -> str | None:
    """The single data column a factor code is built from, if it is ``C(col, ...)`` or ``col``."""
    node = _parse_code(code)
    if _is_c_call(node):
        assert isinstance(node, ast.Call)
        node = node.args[0]
    if isinstance(node, ast.Name) and node.id in columns:
        return node.id
    if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id == "Q"
            and node.args and isinstance(node.args[0], ast.Constant)
            and node.args[0].value in columns):
        return str(node.args[0].value)
    return None


def _coding_given(code: str) -> bool:
    node = _parse_code(code)
    if not _is_c_call(node):
        return False
    assert isinstance(node, ast.Call)
    return len(node.args) >= 2 or any(k.arg == "contrast" for k in node.keywords)


def _deviation_code(code: str) -> str:
    """``C(a, Treatment)`` and a bare categorical ``a`` both become ``C(a, Deviation())``.

    A ``levels=`` argument is kept (it fixes the level order); any other coding is replaced.
    """
    node = _parse_code(code)
    if _is_c_call(node):
        assert isinstance(node, ast.Call)
        inner = ast.unparse(node.args[0])
        levels = [k for k in node.keywords if k.arg == "levels"]
        extra = f", levels={ast.unparse(levels[0].value)}" if levels else ""
        return f"C({inner}, Deviation(){extra})"
    return f"C({code}, Deviation())"


def formula_factor_columns(formula: str) -> tuple[str | None, tuple[str, ...]]:
    """The response column (when the left side is a bare name) and the columns used inside ``C()``.

    For reading a file before the column types are known: the command line
    reads these columns as text, so that numeric level codes make a factor.

    Raises
    ------
    ModelError
        When the formula cannot be parsed.
    """
    if not isinstance(formula, str) or "~" not in formula:
        raise ModelError(
            f"formula must be two-sided text such as 'y ~ C(a) * C(b)'. Got {formula!r} instead."
        )
    try:
        desc = patsy.ModelDesc.from_formula(formula)
    except patsy.PatsyError as exc:
        raise ModelError(f"formula {formula!r} could not be read:\n{exc}") from None
    lhs = formula.split("~", 1)[0].strip()
    node = _parse_code(lhs)
    response = node.id if isinstance(node, ast.Name) else None
    columns: list[str] = []
    for term in desc.rhs_termlist:
        for f in term.factors:
            node = _parse_code(f.code)
            if _is_c_call(node):
                assert isinstance(node, ast.Call)
                arg = node.args[0]
                if isinstance(arg, ast.Name) and arg.id not in columns:
                    columns.append(arg.id)
    return response, tuple(columns)


def read_terms(formula: str, frame: pd.DataFrame, eval_env: Any,
               column_names: Sequence[str]) -> ModelTerms:
    """The term structure of ``formula`` on the cleaned rows ``frame``.

    Parameters
    ----------
    formula : str
        The two-sided formula (already built once by the formula bridge).
    frame : pandas.DataFrame
        The rows the model was fitted on (after the missing-value policy).
    eval_env : patsy.EvalEnvironment
        Where names in the formula are looked up.
    column_names : sequence of str
        The columns of the design built by the formula bridge; checked against
        patsy's so that both describe the same matrix.
    """
    env = eval_env.with_outer_namespace(_namespace())
    try:
        desc = patsy.ModelDesc.from_formula(formula)
        (info,) = patsy.design_matrix_builders([desc.rhs_termlist], lambda: iter([frame]), env,
                                               NA_action="raise")
    except patsy.PatsyError as exc:  # pragma: no cover - the bridge built it already
        raise ModelError(f"formula {formula!r} could not be built:\n{exc}") from None
    if tuple(info.column_names) != tuple(column_names):  # pragma: no cover - internal check
        raise ModelError(f"formula {formula!r}: term structure does not match the design columns")
    columns = list(frame.columns)
    factors: list[FactorInfo] = []
    seen: set[str] = set()
    for term in info.terms:
        for f in term.factors:
            if f.code in seen:
                continue
            seen.add(f.code)
            fi = info.factor_infos[f]
            if fi.type == "categorical":
                factors.append(FactorInfo(f.code, "categorical", _factor_variable(f.code, columns),
                                          tuple(fi.categories), _coding_given(f.code)))
            else:
                factors.append(FactorInfo(f.code, "numeric", _factor_variable(f.code, columns)))
    terms = []
    for term in info.terms:
        sl = info.term_name_slices[term.name()]
        terms.append(TermInfo(term.name(), tuple(f.code for f in term.factors),
                              tuple(range(sl.start, sl.stop))))
    names = {t.name for t in terms}
    typed = [t for t in desc.rhs_termlist if t.name() in names]
    # lower-order terms first, as written within each order (so "C(a)*C(b)*C(c)"
    # gives a, b, c, a:b, a:c, b:c, a:b:c and "x + C(g)" keeps x first)
    typed.sort(key=lambda t: len(t.factors))
    order = [t.name() for t in typed]
    order += [n.name for n in terms if n.name not in order]
    lhs, rhs = formula.split("~", 1)
    lhs_vars = _formula_names(lhs, columns)
    rhs_vars = tuple(n for n in _formula_names(rhs, columns) if n not in lhs_vars)
    return ModelTerms(formula, lhs.strip(), tuple(terms), tuple(order), tuple(factors),
                      tuple(info.column_names), rhs_vars, info)
