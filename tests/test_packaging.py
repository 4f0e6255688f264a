"""`pip install .` (a wheel, not an editable install) gives a working app: the templates, static
files, migrations and demo seed data travel inside the package. Builds the wheel (pip's cache
is reused for the build backend), installs it into a fresh virtual environment and serves pages
from it, run from a directory outside the source tree.

The fresh environment borrows the third-party dependencies from the one running the tests (a
.pth line naming its site-packages; .pth files there, such as an editable install's, are not
run), so the test takes seconds rather than a full dependency install; the package itself comes
only from the wheel, which the test checks."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import sysconfig
import time
from pathlib import Path

import httpx
import pytest

ROOT = Path(__file__).resolve().parents[1]
pytestmark = pytest.mark.packaging  # runs in CI; deselect locally with -m "not packaging"

LIMIT = 300  # seconds for each step; the wheel's build backend comes from pip's cache after the first


def _run(args: list[str], **kw) -> subprocess.CompletedProcess:
    result = subprocess.run(args, capture_output=True, text=True, timeout=LIMIT, **kw)
    assert result.returncode == 0, f"{' '.join(args)}\n{result.stdout[-2000:]}\n{result.stderr[-2000:]}"
    return result


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_the_installed_wheel_serves_pages(tmp_path):
    wheels = tmp_path / "wheels"
    _run([sys.executable, "-m", "pip", "wheel", str(ROOT), "--no-deps", "-q", "-w", str(wheels)])
    [wheel] = wheels.glob("clampdown-*.whl")

    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", str(venv)])
    python = venv / "bin" / "python"
    _run([str(python), "-m", "pip", "install", "-q", "--no-deps", str(wheel)])
    own_site = Path(
        _run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]).stdout.strip()
    )
    borrowed = {sysconfig.get_paths()["purelib"], sysconfig.get_paths()["platlib"]}
    (own_site / "_borrowed_dependencies.pth").write_text("\n".join(sorted(borrowed)) + "\n")

    work = tmp_path / "elsewhere"  # not the source tree: nothing can come from the checkout
    work.mkdir()
    env = {"PATH": f"{venv / 'bin'}:/usr/bin:/bin", "HOME": str(tmp_path), "CLAMPDOWN_DATA_DIR": str(work)}
    where = _run(
        [
            str(python),
            "-c",
            "import app, app.web.config as c; print(app.__file__); print(c.shipped('templates'))",
        ],
        cwd=work,
        env=env,
    ).stdout.split()
    assert all(line.startswith(str(venv)) for line in where), where

    port = _free_port()
    server = subprocess.Popen(
        [str(venv / "bin" / "clampdown"), "serve", "--port", str(port)],
        cwd=work,
        env=env,
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
        text=True,
    )
    try:
        deadline = time.monotonic() + 60
        while True:
            try:
                sign_in = httpx.get(f"http://127.0.0.1:{port}/sign-in", timeout=5)
                break
            except httpx.TransportError:
                if server.poll() is not None or time.monotonic() > deadline:
                    raise AssertionError(
                        f"the installed server did not start:\n{server.stdout.read()}"
                    ) from None
                time.sleep(0.3)
        assert sign_in.status_code == 200 and "<form" in sign_in.text  # a template rendered
        assert httpx.get(f"http://127.0.0.1:{port}/static/app.css").status_code == 200
        assert httpx.get(f"http://127.0.0.1:{port}/static/swagger-ui/swagger-ui.css").status_code == 200
        assert (work / "clampdown.sqlite3").exists()  # the migrations ran from the package
    finally:
        server.terminate()
        server.wait(timeout=20)
        server.stdout.close()

    demo = _run(
        [str(venv / "bin" / "clampdown"), "demo", "--data-dir", str(work / "demo"), "--no-serve"],
        cwd=work,
        env=env,
    )
    assert "dana" in demo.stdout  # the seed data travelled too
    assert os.path.getsize(work / "demo" / "demo.sqlite3") > 0
