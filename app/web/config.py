"""One settings object, read from the environment (prefix CLAMPDOWN_)."""

from __future__ import annotations

import secrets
from functools import lru_cache
from pathlib import Path

from pydantic import Field
from pydantic_settings import BaseSettings, SettingsConfigDict

REPO_ROOT = Path(__file__).resolve().parents[2]
# Worker threads for routes and dependencies that use the database, and the pool beside them.
DEFAULT_THREADS = 16
DEFAULT_POOL_OVERFLOW = 8


class Settings(BaseSettings):
    """CLAMPDOWN_DATA_DIR, CLAMPDOWN_DATABASE_URL, CLAMPDOWN_SECRET_KEY, CLAMPDOWN_SESSION_DAYS."""

    model_config = SettingsConfigDict(env_prefix="CLAMPDOWN_", extra="ignore")

    data_dir: Path = Path("data")
    database_url: str = ""
    secret_key: str = ""
    session_days: int = 14
    # Mark the session cookie Secure (sent over HTTPS only): set it wherever the app is served
    # over HTTPS, directly or behind a proxy that terminates TLS.
    cookie_secure: bool = False
    # Concurrency: the thread pool that runs every route and dependency using the database,
    # and the connection pool sized from it (threads + overflow; see db.make_engine).
    threads: int = Field(DEFAULT_THREADS, ge=1, le=1000)
    db_pool_overflow: int = Field(DEFAULT_POOL_OVERFLOW, ge=0, le=1000)
    # Request bodies, in bytes, refused with 413 before they are parsed: forms, the JSON API,
    # and file uploads (parts CSV, design files).
    body_limit_form: int = Field(256_000, ge=1024)
    body_limit_json: int = Field(1_000_000, ge=1024)
    body_limit_upload: int = Field(2_100_000, ge=1024)
    # Sign-in throttle: failed attempts allowed per account and per client address within the
    # window; beyond them, 429 with Retry-After until the window has passed.
    signin_failures_per_account: int = Field(10, ge=1)
    signin_failures_per_address: int = Field(50, ge=1)
    signin_window_seconds: int = Field(900, ge=1)
    # Lists that grow with what is stored are shown a page at a time.
    page_size: int = Field(50, ge=1, le=1000)
    api_max_limit: int = Field(500, ge=1)

    def resolved(self) -> Settings:
        """Fill the defaults that live in the data directory: the SQLite file and the secret key."""
        data_dir = self.data_dir.expanduser().resolve()
        url = self.database_url or f"sqlite:///{data_dir / 'clampdown.sqlite3'}"
        url = normalise_database_url(url)
        key = self.secret_key or _kept_secret(data_dir)
        if url.startswith("sqlite"):
            data_dir.mkdir(parents=True, exist_ok=True)
        return self.model_copy(update={"data_dir": data_dir, "database_url": url, "secret_key": key})


def normalise_database_url(url: str) -> str:
    """Accept plain postgresql:// URLs and use psycopg 3 for them."""
    for prefix in ("postgresql://", "postgres://"):
        if url.startswith(prefix):
            return "postgresql+psycopg://" + url[len(prefix) :]
    return url


def _kept_secret(data_dir: Path) -> str:
    """The secret key kept in the data directory, generated on first use."""
    path = data_dir / "secret_key"
    if path.exists():
        return path.read_text(encoding="utf-8").strip()
    data_dir.mkdir(parents=True, exist_ok=True)
    key = secrets.token_urlsafe(48)
    path.write_text(key + "\n", encoding="utf-8")
    path.chmod(0o600)
    return key


@lru_cache
def get_settings() -> Settings:
    return Settings().resolved()
