"""steamnet: plant steam network balance and let-down desuperheater checks."""

from ._version import __version__

__all__ = ["__version__"]
