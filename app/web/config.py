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


def shipped(name: str) -> Path:
    """A directory the app reads at run time (templates, static, migrations, seed_data): inside the
    installed package (setup.py maps each there), or at the top of a source checkout."""
    installed = Path(__file__).resolve().parent / "_shipped" / name
    return installed if installed.is_dir() else REPO_ROOT / name


class Settings(BaseSettings):
    """CLAMPDOWN_DATA_DIR, CLAMPDOWN_DATABASE_URL, CLAMPDOWN_SECRET_KEY, CLAMPDOWN_SESSION_DAYS,
    CLAMPDOWN_TRAIL_KEY, CLAMPDOWN_CSV_IMPORT_MAX_BYTES, CLAMPDOWN_RECORD_CHECK_MAX_AGE."""

    model_config = SettingsConfigDict(env_prefix="CLAMPDOWN_", extra="ignore")

    data_dir: Path = Path("data")
    database_url: str = ""
    secret_key: str = ""
    session_days: int = 14
    # The key of the trail's MACs: never in the database. From this variable, else the file
    # trail_key in the data directory (made on first use, mode 0600). Keep a copy somewhere safe:
    # without it `clampdown trail verify` reports every entry as unverifiable.
    trail_key: str = ""
    # A parts CSV larger than this is refused whole.
    csv_import_max_bytes: int = 2_000_000
    # Kept pages, fragments and API lists (templating.FragmentCache): at most this much text.
    fragment_cache_bytes: int = Field(64_000_000, ge=1_000_000)
    # The printed record re-verifies the trail when anything verified changed, and at least
    # this often (seconds) in case the database's change counter was tampered with too.
    record_check_max_age: float = 300.0
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

    def database_url_or_default(self) -> str:
        """The database URL, or the SQLite file in the data directory when none is set."""
        data_dir = self.data_dir.expanduser().resolve()
        return normalise_database_url(self.database_url or f"sqlite:///{data_dir / 'clampdown.sqlite3'}")

    def resolved(self) -> Settings:
        """Fill the defaults that live in the data directory: the SQLite file and the secret key."""
        data_dir = self.data_dir.expanduser().resolve()
        url = self.database_url_or_default()
        key = self.secret_key or _kept_secret(data_dir)
        trail_key = self.trail_key or _kept_secret(data_dir, "trail_key")
        if url.startswith("sqlite"):
            data_dir.mkdir(parents=True, exist_ok=True)
        return self.model_copy(
            update={"data_dir": data_dir, "database_url": url, "secret_key": key, "trail_key": trail_key}
        )


def normalise_database_url(url: str) -> str:
    """Accept plain postgresql:// URLs and use psycopg 3 for them."""
    for prefix in ("postgresql://", "postgres://"):
        if url.startswith(prefix):
            return "postgresql+psycopg://" + url[len(prefix) :]
    return url


def _kept_secret(data_dir: Path, name: str = "secret_key") -> str:
    """A key kept in the data directory (``secret_key``, ``trail_key``), generated on first use."""
    path = data_dir / name
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
