"""Floor 3: factors, partitions, codings, the formula bridge and the Design object."""

from __future__ import annotations

from nestfit.design._blocks import Blocks
from nestfit.design._coding import (
    Coding,
    CodingMatrix,
    Deviation,
    FromHypotheses,
    Helmert,
    Indicator,
    Polynomial,
    Reference,
    SuccessiveDifferences,
    coding_from_name,
)
from nestfit.design._design import ColumnInfo, Design, GroupStructure
from nestfit.design._factor import Factor
from nestfit.design._partition import Partition

__all__ = [
    "Blocks",
    "Coding",
    "CodingMatrix",
    "ColumnInfo",
    "Design",
    "Deviation",
    "Factor",
    "FromHypotheses",
    "GroupStructure",
    "Helmert",
    "Indicator",
    "Partition",
    "Polynomial",
    "Reference",
    "SuccessiveDifferences",
    "coding_from_name",
]
