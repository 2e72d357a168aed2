"""nestfit: group-mean models as design matrices, fitted by QR and compared as nested fits."""

from __future__ import annotations

__version__ = "0.1.0"
