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
    migrate(make_engine(settings.database_url), settings.trail_key)
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
    engine = build_demo(settings.database_url, fresh=True, trail_key=settings.trail_key)
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
    settings = _settings()
    engine = make_engine(settings.database_url)
    migrate(engine, settings.trail_key)
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


def _read_anchor(path: str):
    import json

    from .services.trail import parse_anchor

    try:
        with open(path, encoding="utf-8") as handle:
            document = json.load(handle)
    except OSError as exc:
        raise InputError([f"--anchor: cannot read {path} ({exc.strerror})"]) from None
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError([f"--anchor: {path} is not JSON ({exc})"]) from None
    try:
        return parse_anchor(document)
    except ValueError as exc:
        raise InputError([f"--anchor {path}: {exc}"]) from None


def _trail_engine():
    """The configured database, refused (exit 2) when it is not there: checking must not create
    a data directory or an empty database that then verifies as intact. Prints which one."""
    from sqlalchemy.engine import make_url

    from .config import Settings
    from .db import make_engine, migrate
    from .services.trail import use_key

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
    key = _existing_trail_key(Settings())
    use_key(engine, key)
    migrate(engine, key)
    return engine


def _existing_trail_key(settings) -> str:
    """The trail key from CLAMPDOWN_TRAIL_KEY or the data directory's trail_key file. Never a new
    one: a key made up here would only make every entry fail its MAC, hiding the real mistake
    (the wrong data directory, or a key kept elsewhere)."""
    if settings.trail_key:
        return settings.trail_key
    path = settings.data_dir.expanduser().resolve() / "trail_key"
    if not path.is_file():
        raise InputError(
            [
                f"trail key: none in CLAMPDOWN_TRAIL_KEY and no file {path}; nothing was checked. "
                "Point CLAMPDOWN_DATA_DIR at the server's data directory or set CLAMPDOWN_TRAIL_KEY."
            ]
        )
    return path.read_text(encoding="utf-8").strip()


def _trail_verify(args: argparse.Namespace) -> int:
    from .db import session_scope
    from .services.trail import verify_all

    anchor = _read_anchor(args.anchor) if args.anchor else None
    engine = _trail_engine()
    with session_scope(engine) as db:
        check = verify_all(db, anchor=anchor)
    engine.dispose()
    print(check.summary)
    return 0 if check.ok else 1


def _trail_anchor(args: argparse.Namespace) -> int:
    """Write the head of an intact trail to a file; refuse (exit 1) when the trail is broken."""
    import json

    from .db import session_scope
    from .services.trail import anchor_document, verify_all

    engine = _trail_engine()
    with session_scope(engine) as db:
        check = verify_all(db)
        document = anchor_document(db) if check.ok else None
    engine.dispose()
    if document is None:
        print(check.summary)
        print("no anchor written: anchor only an intact trail")
        return 1
    text = json.dumps(document, indent=2) + "\n"
    if args.output == "-":
        sys.stdout.write(text)
    else:
        try:
            with open(args.output, "x" if not args.force else "w", encoding="utf-8") as handle:
                handle.write(text)
        except FileExistsError:
            raise InputError(
                [f"--output: {args.output} exists; choose another name or pass --force"]
            ) from None
        except OSError as exc:
            raise InputError([f"--output: cannot write {args.output} ({exc.strerror})"]) from None
        print(f"anchored entry {document['seq']} ({document['hash'][:12]}…) in {args.output}")
        print("keep this file away from the server; check later with: clampdown trail verify --anchor FILE")
    return 0


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
        help="check the hash chain, its key MACs and everything shown beside it; exit 1 naming the first failure",
    )
    verify.add_argument(
        "--anchor",
        metavar="FILE",
        help="also check that the trail still holds the head written by `trail anchor`",
    )
    verify.set_defaults(run=_trail_verify)
    anchor = trail_sub.add_parser(
        "anchor", help="verify, then write the trail's head to a file to keep outside the database"
    )
    anchor.add_argument("output", help="the file to write ('-' for standard output)")
    anchor.add_argument("--force", action="store_true", help="replace the file if it exists")
    anchor.set_defaults(run=_trail_anchor)


EXTRA_COMMANDS.append(register)
