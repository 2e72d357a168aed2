"""Notebook display hooks that keep the floors one-way.

Result classes of the statistics floor (``Fit``, ``Comparison``,
``FamilyResult``) ask this registry for their HTML in ``_repr_html_``; the
report floor registers its renderers when it is imported, which ``import
nestfit`` always does. So the statistics code never imports the report code,
and without a registered renderer ``_repr_html_`` returns None and notebooks
fall back to the plain-text form.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

__all__ = ["html_for", "register_html"]

_RENDERERS: dict[str, Callable[[Any], str]] = {}


def register_html(kind: str, render: Callable[[Any], str]) -> None:
    """Make ``render(obj)`` the HTML of results of ``kind`` ("fit", "comparison", "family")."""
    _RENDERERS[kind] = render


def html_for(kind: str, obj: Any) -> str | None:
    """The registered HTML of ``obj``, or None when no renderer is registered for ``kind``."""
    render = _RENDERERS.get(kind)
    return None if render is None else render(obj)
