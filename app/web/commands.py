"""`clampdown serve`, `demo`, `user add` and `trail verify`, registered with app.cli."""

from __future__ import annotations

import argparse
import getpass
import os
import sys

from app.cli import EXTRA_COMMANDS, InputError


def _settings():
    from .config import get_settings

    return get_settings()


def _serve(args: argparse.Namespace) -> int:
    import uvicorn

    from .db import make_engine, migrate

    settings = _settings()
    migrate(make_engine(settings.database_url))
    print(f"Clampdown on http://{args.host}:{args.port}/  (database {settings.database_url})", flush=True)
    if args.workers > 1:
        uvicorn.run(
            "app.web.asgi:app", host=args.host, port=args.port, workers=args.workers, log_level="warning"
        )
    else:
        from .main import create_app

        uvicorn.run(create_app(settings), host=args.host, port=args.port, log_level="warning")
    return 0


def _demo(args: argparse.Namespace) -> int:
    import uvicorn

    from .config import Settings
    from .demo import DEMO_PASSWORD, DEMO_USERS, build_demo
    from .main import create_app

    data_dir = os.path.abspath(args.data_dir)
    settings = Settings(data_dir=data_dir, database_url=f"sqlite:///{os.path.join(data_dir, 'demo.sqlite3')}")
    settings = settings.resolved()
    engine = build_demo(settings.database_url, fresh=True)
    if args.no_serve:
        print(f"Demo database built in {data_dir} (not served; `clampdown demo` serves it).")
    else:
        print(f"Clampdown demo on http://{args.host}:{args.port}/  (a fresh database in {data_dir})")
    print("Sign in as one of (password for all: " + DEMO_PASSWORD + "):")
    for name, role in DEMO_USERS:
        print(f"  {name:8} {role}")
    if args.no_serve:
        return 0
    print("Press Ctrl+C to stop the server.")
    sys.stdout.flush()
    uvicorn.run(create_app(settings, engine=engine), host=args.host, port=args.port, log_level="warning")
    return 0


def _user_add(args: argparse.Namespace) -> int:
    from .db import make_engine, migrate, session_scope
    from .services.errors import InputProblems
    from .services.users import create_user

    password = os.environ.get("CLAMPDOWN_NEW_PASSWORD") if args.password_env else None
    if password is None:
        if not sys.stdin.isatty():
            password = sys.stdin.readline().rstrip("\n")
        else:
            password = getpass.getpass(f"password for {args.name}: ")
    engine = make_engine(_settings().database_url)
    migrate(engine)
    try:
        with session_scope(engine) as db:
            user = create_user(db, args.name, password, args.role)
    except InputProblems as exc:
        raise InputError([f"{path}: {message}" for path, message in exc.problems]) from None
    print(f"created {user.role} {user.name}")
    return 0


def _database_exists(url) -> bool:
    """Whether the database the URL names is there, without creating it (SQLite would)."""
    from sqlalchemy import create_engine, inspect

    if url.get_backend_name() == "sqlite":
        path = url.database
        if not path or path == ":memory:" or not os.path.isfile(path):
            return False
    probe = create_engine(url)
    try:
        with probe.connect() as connection:
            return inspect(connection).has_table("trail_entry")
    except Exception:  # cannot connect: the database is not there for us
        return False
    finally:
        probe.dispose()


def _trail_verify(args: argparse.Namespace) -> int:
    from sqlalchemy.engine import make_url

    from .config import Settings
    from .db import make_engine, migrate, session_scope
    from .services.trail import verify_all

    # Not the resolved settings: checking must not create a data directory or a database.
    url = make_url(Settings().database_url_or_default())
    shown = url.render_as_string(hide_password=True)
    print(f"database: {shown}", flush=True)
    if not _database_exists(url):
        raise InputError(
            [
                f"database {shown}: not found, or it holds no Clampdown trail; nothing was checked. "
                "Set CLAMPDOWN_DATABASE_URL (or CLAMPDOWN_DATA_DIR) to the database to verify."
            ]
        )
    engine = make_engine(url.render_as_string(hide_password=False))
    migrate(engine)
    with session_scope(engine) as db:
        check = verify_all(db)
    engine.dispose()
    print(check.summary)
    return 0 if check.ok else 1


def register(sub: argparse._SubParsersAction) -> None:
    serve = sub.add_parser("serve", help="apply migrations and serve the web app")
    serve.add_argument("--host", default="127.0.0.1")
    serve.add_argument("--port", type=int, default=8000)
    serve.add_argument(
        "--workers", type=int, default=1, help="uvicorn worker processes (use with PostgreSQL)"
    )
    serve.set_defaults(run=_serve)

    demo = sub.add_parser("demo", help="build a fresh demo database from seed_data/ and serve it")
    demo.add_argument("--host", default="127.0.0.1")
    demo.add_argument("--port", type=int, default=8000)
    demo.add_argument("--data-dir", default="data/demo", help="where the demo database goes (replaced)")
    demo.add_argument("--no-serve", action="store_true", help="build the database and stop")
    demo.set_defaults(run=_demo)

    user = sub.add_parser("user", help="manage accounts")
    user_sub = user.add_subparsers(dest="user_command", required=True)
    add = user_sub.add_parser("add", help="create an account (password from standard input or a prompt)")
    add.add_argument("name")
    add.add_argument("--role", required=True, help="designer, reviewer or admin")
    add.add_argument(
        "--password-env", action="store_true", help="read the password from CLAMPDOWN_NEW_PASSWORD"
    )
    add.set_defaults(run=_user_add)

    trail = sub.add_parser("trail", help="the review trail")
    trail_sub = trail.add_subparsers(dest="trail_command", required=True)
    verify = trail_sub.add_parser(
        "verify",
        help="check the hash chain and every revision's document; exit 1 naming the first failure",
    )
    verify.set_defaults(run=_trail_verify)


EXTRA_COMMANDS.append(register)
