"""Passwords (argon2), the signed session cookie, and CSRF tokens.

The session cookie carries a random nonce and the user id, signed with the secret key. The
CSRF token is an HMAC of the nonce, so it is valid only with the cookie it was issued for;
signing in or out issues a fresh nonce (the session is renewed and old tokens stop working).
"""

from __future__ import annotations

import hashlib
import hmac
import secrets
from dataclasses import dataclass

from argon2 import PasswordHasher
from argon2.exceptions import InvalidHashError, VerificationError
from itsdangerous import BadSignature, URLSafeTimedSerializer

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
    nonce: str
    user_id: int | None = None


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

    def new(self, user_id: int | None = None) -> SessionData:
        return SessionData(nonce=secrets.token_urlsafe(24), user_id=user_id)

    def dumps(self, data: SessionData) -> str:
        return self._serializer.dumps({"n": data.nonce, "u": data.user_id})

    def loads(self, cookie: str | None) -> SessionData | None:
        if not cookie:
            return None
        try:
            payload = self._serializer.loads(cookie, max_age=self.max_age)
        except BadSignature:
            return None
        if not isinstance(payload, dict) or not isinstance(payload.get("n"), str):
            return None
        user_id = payload.get("u")
        return SessionData(payload["n"], user_id if isinstance(user_id, int) else None)

    def csrf_token(self, data: SessionData) -> str:
        return hmac.new(self._csrf_key, data.nonce.encode(), hashlib.sha256).hexdigest()

    def csrf_valid(self, data: SessionData | None, token: str | None) -> bool:
        if data is None or not token:
            return False
        return hmac.compare_digest(self.csrf_token(data), token)
