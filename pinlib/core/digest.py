"""SHA-256 without loading OpenSSL.

:mod:`hashlib` loads OpenSSL's library when it is imported (about 4 ms of a fresh
``pinlib check`` on the shared machine, measured), while pinlib's digests (the driver
fits' keys, the fit store's entries and code version) need only SHA-256, which CPython
also carries in a module of its own: ``_sha256`` up to Python 3.11, ``_sha2`` from 3.12.
Both compute the one standard function, so every digest is the same as hashlib's
(``tests/test_fitstore.py`` compares them); an interpreter without either falls back to
hashlib.
"""

from __future__ import annotations

try:
    from _sha256 import sha256
except ImportError:  # pragma: no cover - Python 3.12 and later
    try:
        from _sha2 import sha256
    except ImportError:  # another interpreter, or a build without CPython's own hashes
        from hashlib import sha256

__all__ = ["sha256"]
