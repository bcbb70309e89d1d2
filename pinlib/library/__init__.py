"""The part-class library: schema, loading and merging, recording values."""

from pinlib.library.loader import BUILTIN_DIR, Library, load_library
from pinlib.library.schema import Part, Pin
from pinlib.library.values import Sourced

__all__ = ["BUILTIN_DIR", "Library", "load_library", "Part", "Pin", "Sourced"]
