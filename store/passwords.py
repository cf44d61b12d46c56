"""Password hashing with scrypt (standard library), parameters stored with each hash.

Encoded form: ``scrypt$<N>$<r>$<p>$<salt base64>$<hash base64>``. Because the cost parameters
travel with the hash, they can be raised later without invalidating existing passwords
(:func:`needs_rehash` tells when a stored hash is below the current defaults).

References
----------
OWASP Password Storage Cheat Sheet (scrypt: minimum N=2**17, r=8, p=1).
Percival C, Josefsson S. The scrypt Password-Based Key Derivation Function. RFC 7914, 2016.
"""

from __future__ import annotations

import base64
import hashlib
import hmac
import secrets
from dataclasses import dataclass

from analysis.errors import require


@dataclass(frozen=True)
class ScryptParams:
    """scrypt cost parameters (memory needed is about ``128 * r * n`` bytes)."""

    n: int = 2**17
    r: int = 8
    p: int = 1
    salt_bytes: int = 16
    key_bytes: int = 32

    @property
    def maxmem_bytes(self) -> int:
        # Twice the working set, so OpenSSL's own limit never rejects the parameters.
        return 2 * 128 * self.r * self.n * self.p + 2**20


#: Defaults: the OWASP minimum for scrypt (N=2**17, r=8, p=1), about 128 MiB per hash.
DEFAULT_PARAMS = ScryptParams()
#: Shortest password accepted for a local account (common practice: NIST SP 800-63B asks for 8).
MIN_PASSWORD_LENGTH = 10
_PREFIX = "scrypt"


def _b64(raw: bytes) -> str:
    return base64.b64encode(raw).decode("ascii")


def _derive(password: str, salt: bytes, params: ScryptParams, *, key_bytes: int) -> bytes:
    """The scrypt key of ``password`` with ``salt`` under ``params`` (memory limit raised to fit)."""
    return hashlib.scrypt(
        password.encode("utf-8"),
        salt=salt,
        n=params.n,
        r=params.r,
        p=params.p,
        maxmem=params.maxmem_bytes,
        dklen=key_bytes,
    )


def hash_password(password: str, *, params: ScryptParams = DEFAULT_PARAMS) -> str:
    """Hash ``password`` with a fresh random salt; returns the encoded string to store."""
    require(isinstance(password, str) and password != "", "password", "a non-empty text", "(empty)")
    salt = secrets.token_bytes(params.salt_bytes)
    key = _derive(password, salt, params, key_bytes=params.key_bytes)
    return f"{_PREFIX}${params.n}${params.r}${params.p}${_b64(salt)}${_b64(key)}"


def parse_hash(encoded: str) -> tuple[ScryptParams, bytes, bytes] | None:
    """Split an encoded hash into (params, salt, key); ``None`` when it is not one of ours."""
    parts = encoded.split("$") if encoded else []
    if len(parts) != 6 or parts[0] != _PREFIX:
        return None
    try:
        n, r, p = int(parts[1]), int(parts[2]), int(parts[3])
        salt = base64.b64decode(parts[4], validate=True)
        key = base64.b64decode(parts[5], validate=True)
    except ValueError:
        return None
    if n < 2 or n & (n - 1) or r < 1 or p < 1 or not salt or not key:
        return None
    return ScryptParams(n=n, r=r, p=p, salt_bytes=len(salt), key_bytes=len(key)), salt, key


def verify_password(password: str, encoded: str | None) -> bool:
    """True when ``password`` matches ``encoded`` (constant-time comparison of the keys)."""
    parsed = parse_hash(encoded or "")
    if parsed is None or not isinstance(password, str):
        return False
    params, salt, key = parsed
    return hmac.compare_digest(_derive(password, salt, params, key_bytes=len(key)), key)


def needs_rehash(encoded: str, *, params: ScryptParams = DEFAULT_PARAMS) -> bool:
    """True when the stored hash uses weaker parameters than ``params``."""
    parsed = parse_hash(encoded)
    if parsed is None:
        return True
    old = parsed[0]
    return old.n < params.n or old.r < params.r or old.p < params.p


def check_password_rules(password: str) -> str | None:
    """A message explaining why ``password`` is not acceptable, or ``None`` when it is."""
    if len(password) < MIN_PASSWORD_LENGTH:
        return f"The password must have at least {MIN_PASSWORD_LENGTH} characters."
    if password.strip() != password:
        return "The password must not start or end with spaces."
    return None
