"""A contrast: weights on the level means, kept apart from how the design was coded.

A :class:`Contrast` is a specification: an expression (``"A - mean(B, C)"``),
a mapping ``{level: weight}`` or a sequence of weights in level order. It
becomes a weight vector ``w`` only against a concrete list of levels
(:meth:`Contrast.weights_for`), where unknown levels, empty ``...`` and
weights that do not sum to zero are caught.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from nestfit.contrasts._parse import (
    Binary,
    Expr,
    Level,
    Mean,
    Neg,
    Num,
    ParsedContrast,
    Rest,
    combine,
    parse_contrast,
)
from nestfit.design._coding_custom import _as_weight
from nestfit.errors import ContrastError, FactorError

__all__ = ["Contrast", "contrast", "format_weights"]

# Weights count as summing to zero when |sum w| <= this times sum |w|. Common practice, no source.
SUM_TOL = 1e-10


@dataclass(frozen=True, eq=False)
class Contrast:
    """A linear combination ``sum_i w_i mu_i`` of the level means ``mu_i``.

    Build with :func:`contrast`. The weights are resolved against a factor's
    levels by :meth:`weights_for`.

    Attributes
    ----------
    label : str
        The name shown in results.
    general : bool
        ``True`` accepts weights that do not sum to zero (an estimable linear
        function of the means, such as one level's mean); ``False`` (the
        default) requires a contrast, ``sum_i w_i = 0``.
    """

    label: str
    general: bool = False
    _parsed: ParsedContrast | None = field(default=None, repr=False)
    _mapping: tuple[tuple[str, float], ...] | None = field(default=None, repr=False)
    _positional: tuple[float, ...] | None = field(default=None, repr=False)

    def weights_for(self, levels: Sequence[str]) -> np.ndarray:
        """The weight vector over ``levels`` (in that order).

        Raises
        ------
        FactorError
            A level the factor does not have (the message lists the levels).
        ContrastError
            The wrong number of positional weights, ``...`` standing for no
            level, all weights zero, or weights not summing to zero without
            ``general=True``.
        """
        lv = tuple(str(x) for x in levels)
        if self._parsed is not None:
            w = _evaluate(self._parsed, lv, self.label)
        elif self._mapping is not None:
            w = np.zeros(len(lv))
            for level, weight in self._mapping:
                w[_index(lv, level, self.label)] += weight
        else:
            assert self._positional is not None
            if len(self._positional) != len(lv):
                raise ContrastError(
                    f"contrast {self.label!r} has {len(self._positional)} weights but the factor "
                    f"has {len(lv)} levels ({', '.join(lv)}); give one weight per level, in "
                    "level order, or a mapping {level: weight}")
            w = np.asarray(self._positional, dtype=float)
        return _check_weights(w, lv, self.label, self.general)

    def with_label(self, label: str) -> Contrast:
        """The same contrast under another label."""
        return replace(self, label=_check_label(label))

    def __repr__(self) -> str:
        extra = ", general=True" if self.general else ""
        return f"Contrast({self.label!r}{extra})"


def contrast(spec: Any, *, label: str | None = None, general: bool = False) -> Contrast:
    """Build a contrast from an expression, a mapping or a sequence of weights.

    Parameters
    ----------
    spec : str, mapping, sequence of float or Contrast
        ``"A - mean(B, C)"``, ``"(A + B)/2 - C"``, ``"2*A - B - C"``,
        ``"label = H4 - mean(...)"`` (our own syntax, see
        :mod:`nestfit.contrasts._parse`; parsed, never evaluated);
        ``{"A": 1, "B": -0.5, "C": -0.5}``; or ``[1, -0.5, -0.5]`` in level
        order.
    label : str, optional
        Name shown in results; default the label written before ``=``, the
        expression text, or the weights written out.
    general : bool, default False
        Accept weights that do not sum to zero: then the object is a general
        estimable linear function of the level means, not a contrast.

    Returns
    -------
    Contrast

    Raises
    ------
    ParseError
        Malformed expression, with the position of the fault.
    ContrastError
        Non-numeric or non-finite weights, an empty mapping, a label given
        both in the text and as ``label=``.

    Examples
    --------
    >>> c = contrast("serviced = H4 - mean(...)")
    >>> c.label
    'serviced'
    >>> c.weights_for(["H1", "H2", "H3", "H4", "H5"]).tolist()
    [-0.25, -0.25, -0.25, 1.0, -0.25]
    """
    if isinstance(spec, Contrast):
        out = spec if label is None else spec.with_label(label)
        return replace(out, general=bool(general)) if general else out
    if isinstance(spec, str):
        parsed = parse_contrast(spec)
        if parsed.label is not None and label is not None:
            raise ContrastError(f"the contrast {spec!r} is labelled in its text "
                                f"({parsed.label!r}) and by label={label!r}; give one label")
        name = label if label is not None else parsed.label or " ".join(spec.split())
        return Contrast(_check_label(name), bool(general), _parsed=parsed)
    if isinstance(spec, Mapping):
        if not spec:
            raise ContrastError("the mapping of weights is empty; give {level: weight} pairs")
        pairs = tuple((str(k), _as_weight(v, f"contrast weight of level {k!r}"))
                      for k, v in spec.items())
        name = label if label is not None else format_weights([p[0] for p in pairs],
                                                               [p[1] for p in pairs])
        return Contrast(_check_label(name), bool(general), _mapping=pairs)
    if isinstance(spec, bytes) or not hasattr(spec, "__iter__"):
        raise ContrastError(
            f"a contrast is an expression such as 'A - mean(B, C)', a mapping {{level: weight}} "
            f"or a sequence of weights; got {type(spec).__name__}")
    weights = tuple(_as_weight(v, f"contrast weight {i + 1}") for i, v in enumerate(spec))
    if not weights:
        raise ContrastError("the sequence of weights is empty; give one weight per level")
    name = label if label is not None else "(" + ", ".join(f"{w:g}" for w in weights) + ")"
    return Contrast(_check_label(name), bool(general), _positional=weights)


def format_weights(levels: Sequence[str], weights: Sequence[float] | np.ndarray) -> str:
    """Weights written in the expression syntax, e.g. ``H4 - 0.2*H1 - 0.2*H2``."""
    parts: list[str] = []
    for level, w in zip(levels, weights):
        if w == 0:
            continue
        size = abs(float(w))
        coef = "" if size == 1.0 else f"{size:.6g}*"
        sign = "-" if w < 0 else "+"
        parts.append(f"{sign} {coef}{_quote(str(level))}")
    if not parts:
        return "0"
    text = " ".join(parts)
    return text[2:] if text.startswith("+ ") else "-" + text[2:]


def _quote(label: str) -> str:
    plain = label and not any(c in label for c in " \t+-*/(),=\"'") and label != "mean"
    if plain:
        try:
            float(label)
        except ValueError:
            return label
    return '"' + label + '"' if '"' not in label else "'" + label + "'"


def _check_label(label: Any) -> str:
    if not isinstance(label, str) or not label.strip():
        raise ContrastError(f"a contrast label must be non-empty text, got {label!r}")
    return label.strip()


def _index(levels: tuple[str, ...], level: str, label: str) -> int:
    if level in levels:
        return levels.index(level)
    hint = ""
    digits = len(level) - len(level.lstrip("0123456789."))
    if 0 < digits < len(level) and level[digits:] in levels:
        hint = f" (for a multiple write {level[:digits]}*{level[digits:]})"
    raise FactorError(f"contrast {label!r} names level {level!r}, which the factor does not "
                      f"have{hint}; its levels are {', '.join(levels)}")


def _evaluate(parsed: ParsedContrast, levels: tuple[str, ...], label: str) -> np.ndarray:
    named = parsed.named_levels()
    for name in named:
        _index(levels, name, label)
    rest = np.array([lv not in named for lv in levels], dtype=float)

    def value(node: Expr) -> Any:
        if isinstance(node, Num):
            return node.value
        if isinstance(node, Level):
            out = np.zeros(len(levels))
            out[levels.index(node.name)] = 1.0
            return out
        if isinstance(node, (Neg, Binary)):
            return combine(node, value)
        if isinstance(node, Mean):
            total: Any = 0.0
            count = 0
            for item in node.items:
                if isinstance(item, Rest):
                    if not rest.any():
                        raise ContrastError(
                            f"in contrast {label!r}, '...' stands for no level: every level "
                            f"({', '.join(levels)}) is named elsewhere in the expression")
                    total = total + rest
                    count += int(rest.sum())
                else:
                    total = total + value(item)
                    count += 1
            return total / count
        raise TypeError(f"unknown node {node!r}")  # pragma: no cover

    return np.asarray(value(parsed.expr), dtype=float)


def _check_weights(w: np.ndarray, levels: tuple[str, ...], label: str,
                   general: bool) -> np.ndarray:
    if not np.all(np.isfinite(w)):
        raise ContrastError(f"contrast {label!r} has non-finite weights; check the numbers")
    size = math.fsum(np.abs(w).tolist())
    if size == 0.0:
        raise ContrastError(f"contrast {label!r} has all weights zero over the levels "
                            f"{', '.join(levels)}; it compares nothing")
    total = math.fsum(w.tolist())
    if not general and abs(total) > SUM_TOL * size:
        raise ContrastError(
            f"contrast {label!r} has weights summing to {total:.6g}, not 0, so it is not a "
            "contrast between level means; fix the weights, or pass general=True for a general "
            "linear function of the means (such as one level's mean)")
    w = w + 0.0
    w.flags.writeable = False
    return w
