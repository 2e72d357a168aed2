"""The formula bridge: a patsy formula on a DataFrame becomes a nestfit Design.

patsy is used only here. Its ``DesignInfo`` is translated at once into our
own column metadata (:class:`ColumnInfo`: name, term, label), so nothing
downstream depends on patsy's internals and another formula backend could
replace this module.
"""

from __future__ import annotations

import io
import tokenize
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
import patsy
import patsy.builtins

from nestfit._data import MissingReport, clean_columns
from nestfit.design._design import ColumnInfo, Design
from nestfit.errors import ColumnError, DataError, ModelError

__all__ = ["FormulaDesign", "design_from_formula"]


@dataclass(frozen=True, eq=False)
class FormulaDesign:
    """A design built from a formula, with its response and the rows it kept."""

    design: Design
    y: np.ndarray
    response_name: str
    missing: MissingReport
    row_labels: np.ndarray
    weights: np.ndarray | None = None


def _formula_names(formula: str, columns: Any) -> list[str]:
    """Column names of ``data`` that appear as identifiers in ``formula``, in order."""
    names: list[str] = []
    try:
        for tok in tokenize.generate_tokens(io.StringIO(formula).readline):
            if tok.type == tokenize.NAME and tok.string in columns and tok.string not in names:
                names.append(tok.string)
    except (tokenize.TokenError, IndentationError, SyntaxError) as exc:
        raise ModelError(f"cannot read formula {formula!r}: {exc}") from None
    # Q("name with spaces") refers to a column by a quoted string
    for col in columns:
        if isinstance(col, str) and (f'Q("{col}")' in formula or f"Q('{col}')" in formula):
            if col not in names:
                names.append(col)
    return names


def _as_categorical(data: Any) -> Any:
    """``data`` as a pandas Categorical (Series) with patsy's own level order, or None.

    For integer or all-text data (and data that already is categorical) this
    is the level set and order patsy finds by sniffing (sorted values), but
    patsy then codes a pandas Categorical from its codes instead of looking
    up every value in Python.
    """
    if isinstance(data, pd.Series):
        if isinstance(data.dtype, pd.CategoricalDtype):
            return data
        if data.dtype.kind in "iu" or (
            data.dtype != bool and pd.api.types.infer_dtype(data, skipna=False) == "string"
        ):
            return pd.Series(pd.Categorical(data), index=data.index, name=data.name)
    elif isinstance(data, np.ndarray) and data.ndim == 1 and data.dtype.kind in "iu":
        return pd.Categorical(data)
    elif isinstance(data, pd.Categorical):
        return data
    return None


def categorical(data: Any, contrast: Any = None, levels: Any = None) -> Any:
    """patsy's ``C(data, contrast, levels)``, faster for plain ``C(g)`` of integer or text data.

    With neither a contrast nor levels, ``C(g)`` only marks ``g`` as
    categorical; handing patsy a pandas Categorical with the levels patsy
    would sniff gives the same columns, names and values (the tests compare
    the two) without patsy's value-by-value pass in Python. Everything else
    is passed to ``patsy.builtins.C`` unchanged.
    """
    if contrast is None and levels is None:
        cat = _as_categorical(data)
        if cat is not None:
            return cat
    return patsy.builtins.C(data, contrast, levels)


def _namespace() -> dict[str, Any]:
    """Names offered inside formulas: our codings, so ``C(g, Helmert())`` works, and ``C``."""
    from nestfit.design import _coding

    space = {name: getattr(_coding, name) for name in getattr(_coding, "__all__", [])}
    space["C"] = categorical
    try:
        from nestfit.design._blocks import Blocks

        space["Blocks"] = Blocks
    except ImportError:  # pragma: no cover - optional during development
        pass
    return space


def design_from_formula(
    formula: str,
    data: Any,
    *,
    missing: str = "drop",
    name: str | None = None,
    eval_env: Any = None,
    weights: str | None = None,
) -> FormulaDesign:
    """Build a Design from a patsy formula such as ``"y ~ C(g) + x"``.

    Parameters
    ----------
    formula : str
        Two-sided patsy formula. Our codings are available inside it
        (``C(g, Helmert())``, ``C(dose, Polynomial(spacing=[0, 1, 2, 4]))``,
        ``C(head, Blocks("H4 | ..."))``).
    data : pandas.DataFrame
        The table.
    missing : {"drop", "raise"}
        Rows with a missing value in any column the formula names are
        dropped (and counted) or make the call fail.
    name : str, optional
        Model name; default the formula's right-hand side.
    eval_env : patsy.EvalEnvironment, optional
        Where names in the formula (functions like ``np.log``) are looked up.
    weights : str, optional
        A numeric column of positive case weights, cleaned with the same rows.

    Returns
    -------
    FormulaDesign

    Raises
    ------
    ColumnError, DataError, ModelError
        Unknown or non-numeric columns, NaN/inf, a malformed formula (patsy's
        message with the offending part marked), a one-sided formula.
    """
    if not isinstance(formula, str) or "~" not in formula:
        raise ModelError(
            f"formula must be two-sided text such as 'y ~ C(group)'. Got {formula!r} instead."
        )
    if not isinstance(data, pd.DataFrame):
        try:
            data = pd.DataFrame(data)
        except (TypeError, ValueError) as exc:
            raise DataError(f"data must be a pandas DataFrame: {exc}") from None
    lhs, rhs = formula.split("~", 1)
    lhs_names = _formula_names(lhs, data.columns)
    rhs_names = [n for n in _formula_names(rhs, data.columns) if n not in lhs_names]
    if not lhs.strip():
        raise ModelError(f"formula {formula!r} has no response on the left of '~'")
    if not lhs_names:
        raise ColumnError(
            f"the response {lhs.strip()!r} in formula {formula!r} is not a column of the data; "
            f"available columns: {', '.join(map(str, data.columns[:20]))}"
        )
    numeric = lhs_names + ([weights] if weights is not None else [])
    frame, report = clean_columns(data, numeric=numeric, categorical=rhs_names,
                                  missing=missing)
    w = None
    if weights is not None:
        w = frame[weights].to_numpy(dtype=np.float64)
        if np.any(w <= 0):
            raise DataError(f"weights column {weights!r} has zero or negative values; "
                            "weights must be positive")
    env = eval_env if eval_env is not None else patsy.EvalEnvironment.capture(1)
    env = env.with_outer_namespace(_namespace())
    try:
        y_mat, x_mat = patsy.dmatrices(formula, frame, NA_action="raise", eval_env=env,
                                       return_type="matrix")
    except patsy.PatsyError as exc:
        if "NameError" in str(exc):
            raise ColumnError(
                f"formula {formula!r} names something unknown (neither a column of the data "
                f"nor a function in scope):\n{exc}"
            ) from None
        raise ModelError(f"formula {formula!r} could not be built:\n{exc}") from None
    except NameError as exc:
        raise ColumnError(f"formula {formula!r} names something unknown: {exc}") from None
    if y_mat.shape[1] != 1:
        raise ModelError(
            f"the response of {formula!r} became {y_mat.shape[1]} columns "
            f"({', '.join(y_mat.design_info.column_names)}); it must be one numeric column"
        )
    info = x_mat.design_info
    columns = []
    for term_name, sl in info.term_name_slices.items():
        for col in info.column_names[sl]:
            label = None
            if col.startswith(term_name) and col.endswith("]") and "[" in col:
                label = col[col.rfind("[") + 1 : -1]
            columns.append(ColumnInfo(col, term_name, label))
    X = np.asarray(x_mat, dtype=np.float64)
    y = np.asarray(y_mat, dtype=np.float64)[:, 0]
    bad = ~np.isfinite(X)
    if bad.any():
        j = int(np.flatnonzero(bad.any(axis=0))[0])
        raise DataError(
            f"design column {info.column_names[j]!r} has NaN or infinite values; "
            "check the variables it is built from"
        )
    if not np.all(np.isfinite(y)):
        raise DataError(f"the response {lhs.strip()!r} has NaN or infinite values after "
                        "evaluation; check the transformation")
    if X.shape[1] == 0:
        raise ModelError(f"formula {formula!r} has no columns on the right-hand side")
    model_name = name or rhs.strip()
    design = Design(model_name, tuple(columns), X.shape[0], description=f"{lhs.strip()} ~ "
                    f"{rhs.strip()}", matrix=X)
    return FormulaDesign(design, y, y_mat.design_info.column_names[0], report,
                         frame.index.to_numpy(), w)
