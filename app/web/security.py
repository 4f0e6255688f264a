"""Passwords (argon2), the signed session cookie, and CSRF tokens.

The session cookie carries a random nonce, the user id and the account's session generation
(see SessionData), signed with the secret key. The
CSRF token is an HMAC of the nonce, so it is valid only with the cookie it was issued for;
signing in or out issues a fresh nonce (the session is renewed and old tokens stop working).
"""

from __future__ import annotations

import hashlib
import hmac
import math
import secrets
import time
from dataclasses import dataclass

from argon2 import PasswordHasher
from argon2.exceptions import InvalidHashError, VerificationError
from itsdangerous import BadSignature, URLSafeTimedSerializer
from limits import RateLimitItemPerSecond
from limits.storage import MemoryStorage
from limits.strategies import MovingWindowRateLimiter

COOKIE_NAME = "clampdown_session"
CSRF_HEADER = "X-CSRF-Token"
CSRF_FIELD = "csrf_token"

_hasher = PasswordHasher()


def hash_password(password: str) -> str:
    return _hasher.hash(password)


def verify_password(password_hash: str, password: str) -> bool:
    try:
        return _hasher.verify(password_hash, password)
    except (VerificationError, InvalidHashError):
        return False


# Spend the same time on an unknown user name as on a wrong password.
DUMMY_HASH = hash_password(secrets.token_urlsafe(16))


@dataclass(frozen=True)
class SessionData:
    """A session: its nonce (the CSRF tokens derive from it), the signed-in user if any, and
    that user's session generation when it was issued. Raising the account's generation
    (sign-out, password change, deactivation) ends every session issued before."""

    nonce: str
    user_id: int | None = None
    generation: int = 0


class SessionSigner:
    def __init__(self, secret_key: str, max_age_seconds: int):
        self._serializer = URLSafeTimedSerializer(secret_key, salt="clampdown-session")
        self._csrf_key = hashlib.sha256(("csrf:" + secret_key).encode()).digest()
        self._flash = URLSafeTimedSerializer(secret_key, salt="clampdown-flash")
        self.max_age = max_age_seconds

    # What an action did, carried by its redirect in a signed query parameter: nobody can make a
    # page say "signed off" with a crafted link, and a bookmarked URL stops saying it.
    FLASH_SECONDS = 300

    def flash_dumps(self, message: str) -> str:
        return self._flash.dumps(message)

    def flash_loads(self, token: str | None) -> str | None:
        if not token:
            return None
        try:
            message = self._flash.loads(token, max_age=self.FLASH_SECONDS)
        except BadSignature:
            return None
        return message if isinstance(message, str) else None

    def new(self, user_id: int | None = None, generation: int = 0) -> SessionData:
        return SessionData(nonce=secrets.token_urlsafe(24), user_id=user_id, generation=generation)

    def dumps(self, data: SessionData) -> str:
        return self._serializer.dumps({"n": data.nonce, "u": data.user_id, "g": data.generation})

    def loads(self, cookie: str | None) -> SessionData | None:
        if not cookie:
            return None
        try:
            payload = self._serializer.loads(cookie, max_age=self.max_age)
        except BadSignature:
            return None
        if not isinstance(payload, dict) or not isinstance(payload.get("n"), str):
            return None
        user_id, generation = payload.get("u"), payload.get("g")
        if not isinstance(user_id, int) or not isinstance(generation, int):
            user_id, generation = None, 0
        return SessionData(payload["n"], user_id, generation)

    def csrf_token(self, data: SessionData) -> str:
        return hmac.new(self._csrf_key, data.nonce.encode(), hashlib.sha256).hexdigest()

    def csrf_valid(self, data: SessionData | None, token: str | None) -> bool:
        if data is None or not token:
            return False
        return hmac.compare_digest(self.csrf_token(data), token)


class SignInThrottle:
    """Failed sign-ins counted per account name and per client address over a moving window
    (the `limits` package, in this process's memory). Checked before any password hash is
    computed, so a flood of guesses costs no hashing once refused. A success clears the
    account's count. With several worker processes each keeps its own counts."""

    def __init__(self, per_account: int, per_address: int, window_seconds: int):
        self._limiter = MovingWindowRateLimiter(MemoryStorage())
        self._account = RateLimitItemPerSecond(per_account, window_seconds)
        self._address = RateLimitItemPerSecond(per_address, window_seconds)

    def retry_after(self, name: str, address: str) -> int | None:
        """Seconds until another attempt is allowed, or None when it is allowed now."""
        waits = [
            self._limiter.get_window_stats(item, kind, key).reset_time - time.time()
            for item, kind, key in self._keys(name, address)
            if not self._limiter.test(item, kind, key)
        ]
        return max(1, math.ceil(max(waits))) if waits else None

    def failed(self, name: str, address: str) -> None:
        for item, kind, key in self._keys(name, address):
            self._limiter.hit(item, kind, key)

    def succeeded(self, name: str) -> None:
        self._limiter.clear(self._account, "account", _account_key(name))

    def _keys(self, name: str, address: str):
        return ((self._account, "account", _account_key(name)), (self._address, "address", address))


def _account_key(name: str) -> str:
    return (name or "").strip().lower()[:80]
