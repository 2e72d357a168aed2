"""The Design: a model matrix together with what its columns mean."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from nestfit.design._factor import Factor
from nestfit.design._partition import Partition
from nestfit.errors import ModelError

__all__ = ["ColumnInfo", "Design", "GroupStructure"]


@dataclass(frozen=True)
class ColumnInfo:
    """One design column: its name, the model term it belongs to, and its label in that term.

    Attributes
    ----------
    name : str
        Full column name, e.g. ``"head[H4]"`` or ``"Intercept"``.
    term : str
        The model term, e.g. ``"head"``, ``"Intercept"``, ``"C(a):C(b)"``.
    label : str or None
        The column's label within its term (a level, a block, a contrast name).
    """

    name: str
    term: str
    label: str | None = None


@dataclass(frozen=True, eq=False)
class GroupStructure:
    """The rows of a design are coding rows of one factor's levels: ``X = C[codes]``.

    Attributes
    ----------
    factor : Factor
        The factor whose level decides each row.
    coding : ndarray, shape (k, p)
        Row ``j`` is the design row of every observation at level ``j``.
    partition : Partition or None
        The partition of levels the model expresses, when it is a partition model.
    """

    factor: Factor
    coding: np.ndarray = field(repr=False)
    partition: Partition | None = None

    def __post_init__(self) -> None:
        coding = np.array(self.coding, dtype=np.float64)
        if coding.ndim != 2 or coding.shape[0] != self.factor.n_levels:
            raise ModelError(
                f"coding matrix has shape {coding.shape}; expected {self.factor.n_levels} rows, "
                f"one per level of {self.factor.name!r}"
            )
        coding.flags.writeable = False
        object.__setattr__(self, "coding", coding)


@dataclass(frozen=True, eq=False)
class Design:
    """A model matrix and its meaning.

    A design is either *dense* (an explicit ``n x p`` matrix, e.g. from a
    formula) or *grouped* (rows given by one factor, ``X = C[codes]``, which
    the fitter solves without building the matrix). Both describe their
    columns with :class:`ColumnInfo`.

    Attributes
    ----------
    name : str
        The model's name, used in comparison tables ("equal means", ...).
    columns : tuple of ColumnInfo
        One entry per column.
    n_rows : int
        Number of observations.
    description : str
        What the model claims, in words.
    matrix : ndarray or None
        The dense matrix (``None`` for a grouped design).
    groups : GroupStructure or None
        The group structure (``None`` for a dense design).
    """

    name: str
    columns: tuple[ColumnInfo, ...]
    n_rows: int
    description: str = ""
    matrix: np.ndarray | None = field(default=None, repr=False)
    groups: GroupStructure | None = field(default=None, repr=False)

    def __post_init__(self) -> None:
        if (self.matrix is None) == (self.groups is None):
            raise ModelError("a design needs exactly one of a dense matrix or a group structure")
        if self.matrix is not None:
            mat = np.array(self.matrix, dtype=np.float64)
            if mat.ndim != 2 or mat.shape != (self.n_rows, len(self.columns)):
                raise ModelError(
                    f"design {self.name!r}: matrix shape {mat.shape} does not match "
                    f"{self.n_rows} rows and {len(self.columns)} named columns"
                )
            mat.flags.writeable = False
            object.__setattr__(self, "matrix", mat)
        elif self.groups is not None:
            if self.groups.coding.shape[1] != len(self.columns):
                raise ModelError(
                    f"design {self.name!r}: coding has {self.groups.coding.shape[1]} columns "
                    f"but {len(self.columns)} are named"
                )
            if self.groups.factor.n_obs != self.n_rows:
                raise ModelError(f"design {self.name!r}: factor length differs from n_rows")
        names = [c.name for c in self.columns]
        if len(set(names)) != len(names):
            dup = sorted({x for x in names if names.count(x) > 1})
            raise ModelError(f"design {self.name!r} has duplicated column names {dup}")

    @classmethod
    def grouped(
        cls,
        name: str,
        factor: Factor,
        coding: np.ndarray,
        columns: Sequence[ColumnInfo],
        *,
        description: str = "",
        partition: Partition | None = None,
    ) -> Design:
        """A design whose rows are ``coding[factor.codes]``."""
        return cls(
            name=name,
            columns=tuple(columns),
            n_rows=factor.n_obs,
            description=description,
            groups=GroupStructure(factor, coding, partition),
        )

    @property
    def column_names(self) -> tuple[str, ...]:
        """Names of the columns, in order."""
        return tuple(c.name for c in self.columns)

    @property
    def n_columns(self) -> int:
        """Number of columns ``p``."""
        return len(self.columns)

    @property
    def terms(self) -> tuple[str, ...]:
        """The model terms, in column order, each once."""
        return tuple(dict.fromkeys(c.term for c in self.columns))

    @property
    def is_grouped(self) -> bool:
        """True when the design has group structure the fitter can exploit."""
        return self.groups is not None

    def to_dense(self) -> np.ndarray:
        """The ``n x p`` matrix (materialised for a grouped design)."""
        if self.matrix is not None:
            return self.matrix
        assert self.groups is not None
        return self.groups.coding[self.groups.factor.codes]

    def head(self, n: int = 6) -> np.ndarray:
        """The first ``n`` rows of the matrix, without building the rest."""
        if self.matrix is not None:
            return self.matrix[:n]
        assert self.groups is not None
        return self.groups.coding[self.groups.factor.codes[:n]]

    def __repr__(self) -> str:
        kind = "grouped" if self.is_grouped else "dense"
        cols = ", ".join(self.column_names[:6]) + (", ..." if self.n_columns > 6 else "")
        return f"Design({self.name!r}, {kind}, n={self.n_rows}, columns=[{cols}])"
