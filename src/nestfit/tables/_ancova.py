"""Analysis of covariance: the test of equal slopes as a nested comparison.

The usual analysis of covariance ``y ~ C(g) + x`` assumes one common slope of
``y`` on ``x`` in every group, so that the groups differ by a constant
amount at every ``x`` and the adjusted means (group means at one covariate
value, :meth:`FactorialModels.marginal_means`) describe them fully. The
assumption is itself a model comparison:

    smaller  y ~ C(g) + x          (parallel lines, common slope)
    larger   y ~ C(g) + x + C(g):x (one slope per group)

``F = ((RSS_s - RSS_l) / (k - 1)) / (RSS_l / df_l)`` on ``k - 1`` and
``df_l`` degrees of freedom, with ``k`` groups (Seber & Lee, *Linear
Regression Analysis*, 2nd ed., 2003, sec. 7.4, from memory). A small p-value
says the slopes differ: the group difference then depends on ``x`` and a
single adjusted mean per group does not summarise it. A large p-value is no
proof of equal slopes (the test may lack power).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from nestfit._compare import Comparison, compare
from nestfit.design._formula import design_from_formula
from nestfit.errors import FactorError, ModelError
from nestfit.tables._terms import FactorInfo

if TYPE_CHECKING:
    from nestfit.tables._models import FactorialModels

__all__ = ["equal_slopes"]


def _pick(options: tuple[FactorInfo, ...], name: str | None, role: str,
          models: FactorialModels) -> FactorInfo:
    if name is None:
        if len(options) == 1:
            return options[0]
        if not options:
            raise ModelError(f"model {models.name!r} has no {role}: the equal-slopes test needs "
                             "a factor and a covariate, e.g. 'y ~ C(g) + x'")
        raise ModelError(f"model {models.name!r} has several {role}s "
                         f"({', '.join(o.name for o in options)}); name the one to test")
    for o in options:
        if name in (o.name, o.code):
            return o
    known = ", ".join(o.name for o in options) or "none"
    raise FactorError(f"model {models.name!r} has no {role} {name!r}; its {role}s are: {known}")


def equal_slopes(models: FactorialModels, *, factor: str | None = None,
                 covariate: str | None = None) -> Comparison:
    """Compare the model with one common slope to the model with a slope per group.

    Parameters
    ----------
    models : FactorialModels
        A model with a factor and a covariate, e.g. from
        ``factorial("y ~ C(g) + x", data)``.
    factor, covariate : str, optional
        Which factor and covariate (column name or code); needed only when
        the model has several.

    Returns
    -------
    Comparison
        ``model -> model + factor:covariate`` (see :func:`nestfit.compare`).

    Raises
    ------
    ModelError
        No factor or no covariate, several without a choice, or a model that
        already has separate slopes.
    FactorError
        An unknown factor or covariate name.
    """
    x = _pick(models.terms.numeric, covariate, "covariate", models)
    f = _pick(models.terms.categorical, factor, "factor", models)
    wanted = frozenset({f.code, x.code})
    if any(t.factors >= wanted for t in models.terms.terms):
        raise ModelError(f"model {models.name!r} already lets the slope on {x.name!r} differ "
                         f"by {f.name!r}; test equal slopes from the model without that term")
    term = f"{f.code}:{x.code}"
    formula = f"{models.formula} + {term}"
    built = design_from_formula(formula, models._data, missing=models._missing_policy,
                                eval_env=models._env, name=f"{models.name} + {term}")
    small = models.full
    large = models.fit(built.design)
    return compare(small, large)
