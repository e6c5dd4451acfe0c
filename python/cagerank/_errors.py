"""The exception every cagerank failure raises (defined in the extension module)."""

from ._native import CagerankError

__all__ = ["CagerankError"]
