"""Effect sizes with confidence intervals, for nested comparisons and contrasts.

effect_sizes(comparison) -> ComparisonEffects
    Eta, partial eta, omega and epsilon squared and Cohen's f for every step,
    with intervals from the noncentral F.
contrast_effect(fit_or_models, weights) -> StandardizedDifference
    A contrast of level means divided by the error standard deviation (weights
    rescaled so the positive ones sum to 1), with a noncentral-t interval.
standardized_difference(estimate, std_error, df, sigma)
    The same from a contrast's own numbers (the hook for contrast objects).
noncentrality_interval_f, noncentrality_interval_t
    The interval inversions themselves.
"""

from __future__ import annotations

from nestfit.effects._comparison import (
    ComparisonEffects,
    EffectEstimate,
    StepEffects,
    effect_sizes,
)
from nestfit.effects._contrast import (
    StandardizedDifference,
    contrast_effect,
    scaled_contrast_weights,
    standardized_difference,
)
from nestfit.effects._interval import noncentrality_interval_f, noncentrality_interval_t

__all__ = [
    "ComparisonEffects",
    "EffectEstimate",
    "StandardizedDifference",
    "StepEffects",
    "contrast_effect",
    "effect_sizes",
    "noncentrality_interval_f",
    "noncentrality_interval_t",
    "scaled_contrast_weights",
    "standardized_difference",
]
