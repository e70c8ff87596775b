"""Fixtures for the onboard infrastructure tests: a real MQTT broker and a real PostgreSQL database.

- Broker: ``HW_TEST_MQTT_URL`` (``mqtt://host:port``) if set; otherwise a private ``mosquitto`` is started
  on a free loopback port from a temporary config (persistence on, large ``max_queued_messages``) and
  stopped afterwards. Tests that restart the broker always start their own.
- PostgreSQL: ``HW_TEST_PG_URL`` if set, else ``postgresql+psycopg2://postgres@127.0.0.1:5432/test``; each
  run works in a fresh schema that is dropped afterwards.

If a service cannot be reached the tests FAIL (never skip): these are the real-service checks.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import tempfile
import time
import uuid
from collections.abc import Iterator
from pathlib import Path
from urllib.parse import urlsplit

import pytest
import sqlalchemy as sa

MOSQUITTO_CANDIDATES = ("/usr/sbin/mosquitto", "mosquitto")
DEFAULT_PG_URL = "postgresql+psycopg2://postgres@127.0.0.1:5432/test"


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def wait_port(host: str, port: int, timeout: float = 15.0) -> None:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        try:
            socket.create_connection((host, port), 0.2).close()
            return
        except OSError:
            time.sleep(0.05)
    raise RuntimeError(f"MQTT broker at {host}:{port} not reachable after {timeout} s")


class Mosquitto:
    """A private mosquitto process with persistence, restartable on the same port."""

    def __init__(
        self,
        workdir: Path,
        port: int | None = None,
        extra: list[str] | None = None,
        allow_anonymous: bool = True,
    ):
        exe = next((p for p in MOSQUITTO_CANDIDATES if shutil.which(p)), None)
        if exe is None:
            raise RuntimeError(
                "mosquitto is not installed (apt-get install mosquitto); broker tests cannot run"
            )
        self.exe = exe
        self.host = "127.0.0.1"
        self.port = port or free_port()
        self.workdir = workdir
        self.conf = workdir / "mosquitto.conf"
        lines = [
            f"allow_anonymous {'true' if allow_anonymous else 'false'}",
            "persistence true",
            f"persistence_location {workdir}/",
            "autosave_interval 1",
            "max_queued_messages 1000000",
            "max_inflight_messages 100",
            "set_tcp_nodelay true",
            f"log_dest file {workdir}/mosquitto.log",
            "log_type error",
            "log_type warning",
        ]
        if os.geteuid() == 0:
            lines.append("user root")  # keep root so the temporary persistence folder stays writable
        lines.append(f"listener {self.port} 127.0.0.1")
        lines.extend(extra or [])  # e.g. a password_file or a second (TLS) listener
        self.conf.write_text("\n".join(lines) + "\n")
        self.proc: subprocess.Popen[bytes] | None = None

    @property
    def url(self) -> str:
        return f"mqtt://{self.host}:{self.port}"

    def start(self) -> None:
        self.proc = subprocess.Popen(
            [self.exe, "-c", str(self.conf)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
        )
        try:
            wait_port(self.host, self.port)
        except RuntimeError:
            log = self.workdir / "mosquitto.log"
            raise RuntimeError(
                f"mosquitto did not start: {log.read_text() if log.exists() else ''}"
            ) from None

    def stop(self) -> None:
        if self.proc is not None:
            self.proc.terminate()  # SIGTERM: mosquitto saves its persistence file on the way out
            try:
                self.proc.wait(10)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait(5)
            self.proc = None

    def restart(self, downtime_s: float = 1.0) -> None:
        self.stop()
        time.sleep(downtime_s)
        self.start()


class ExternalBroker:
    """A broker given by HW_TEST_MQTT_URL (not restartable)."""

    def __init__(self, url: str):
        parts = urlsplit(url)
        if parts.scheme not in ("mqtt", "mqtts") or not parts.hostname:
            raise RuntimeError(f"HW_TEST_MQTT_URL={url!r} must look like mqtt://host:port")
        self.url = url
        self.host = parts.hostname
        self.port = parts.port or 1883
        wait_port(self.host, self.port, timeout=5.0)


@pytest.fixture(scope="session")
def mqtt_broker() -> Iterator[Mosquitto | ExternalBroker]:
    """A reachable broker for the session (external by env, else a private mosquitto)."""
    url = os.environ.get("HW_TEST_MQTT_URL")
    if url:
        yield ExternalBroker(url)
        return
    d = Path(tempfile.mkdtemp(prefix="hw-mosquitto-"))
    b = Mosquitto(d)
    b.start()
    try:
        yield b
    finally:
        b.stop()
        shutil.rmtree(d, ignore_errors=True)


@pytest.fixture()
def own_mosquitto() -> Iterator[Mosquitto]:
    """A private mosquitto for one test (for restarts), always started here."""
    d = Path(tempfile.mkdtemp(prefix="hw-mosquitto-"))
    b = Mosquitto(d)
    b.start()
    try:
        yield b
    finally:
        b.stop()
        shutil.rmtree(d, ignore_errors=True)


@pytest.fixture()
def vessel_id() -> str:
    """A vessel id unique to the test, so tests sharing a broker never see each other's topics."""
    return "t" + uuid.uuid4().hex[:10]


@pytest.fixture(scope="session")
def pg_base_url() -> str:
    return os.environ.get("HW_TEST_PG_URL", DEFAULT_PG_URL)


@pytest.fixture()
def pg_engine(pg_base_url: str) -> Iterator[sa.Engine]:
    """Engine on a fresh PostgreSQL schema (dropped afterwards). Fails if the server is unreachable."""
    schema = "hw_test_" + uuid.uuid4().hex[:12]
    admin = sa.create_engine(pg_base_url)
    try:
        with admin.begin() as c:
            c.execute(sa.text(f'CREATE SCHEMA "{schema}"'))
    except sa.exc.OperationalError as exc:
        admin.dispose()
        raise RuntimeError(f"PostgreSQL at {pg_base_url} not reachable: {exc}") from None
    engine = sa.create_engine(
        pg_base_url, connect_args={"options": f"-csearch_path={schema}"}, pool_pre_ping=True
    )
    try:
        yield engine
    finally:
        engine.dispose()
        with admin.begin() as c:
            c.execute(sa.text(f'DROP SCHEMA "{schema}" CASCADE'))
        admin.dispose()


@pytest.fixture()
def mosquitto_tools():
    """The broker helpers for tests that need a specially configured broker (auth, TLS)."""
    import types

    return types.SimpleNamespace(Mosquitto=Mosquitto, free_port=free_port, wait_port=wait_port)


class TinyFS:
    """A small file system for full-disk and read-only probes.

    A real tmpfs of ``size`` bytes mounted on a temporary folder when the test runs as root and may mount
    (this machine kind and CI: ENOSPC and EROFS come from the kernel); otherwise a simulation: ``open``
    and ``os.open`` of a path inside the folder for writing raise the same ``OSError`` the kernel would.
    """

    def __init__(self, path: Path, monkeypatch: pytest.MonkeyPatch, size: str = "256k"):
        self.path = path
        self.mp = monkeypatch
        path.mkdir()
        r = subprocess.run(
            ["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(path)], capture_output=True, check=False
        )
        self.mounted = r.returncode == 0
        self.state: int | None = None  # errno the simulation raises

    def fill(self) -> None:
        """Fill the file system so that the next write fails with ENOSPC."""
        import errno

        if not self.mounted:
            self._simulate(errno.ENOSPC)
            return
        for name, block in (("filler", 4096), ("filler2", 1)):  # unbuffered: the error comes from write
            with open(self.path / name, "wb", buffering=0) as f:
                try:
                    while True:
                        f.write(b"\0" * block)
                except OSError as exc:
                    assert exc.errno == errno.ENOSPC

    def read_only(self) -> None:
        import errno

        if not self.mounted:
            self._simulate(errno.EROFS)
            return
        subprocess.run(["mount", "-o", "remount,ro", str(self.path)], check=True)

    def _simulate(self, code: int) -> None:
        import builtins

        root = str(self.path)
        real_open, real_os_open = builtins.open, os.open

        def inside(p) -> bool:
            try:
                return os.path.abspath(os.fspath(p)).startswith(root)
            except TypeError:
                return False

        def fake_open(file, mode="r", *a, **k):
            if inside(file) and any(c in mode for c in "wax+"):
                raise OSError(code, os.strerror(code), os.fspath(file))
            return real_open(file, mode, *a, **k)

        def fake_os_open(p, flags, *a, **k):
            if inside(p) and flags & (os.O_WRONLY | os.O_RDWR | os.O_CREAT):
                raise OSError(code, os.strerror(code), os.fspath(p))
            return real_os_open(p, flags, *a, **k)

        real_mkdir = os.mkdir

        def fake_mkdir(p, *a, **k):
            if inside(p):
                raise OSError(code, os.strerror(code), os.fspath(p))
            return real_mkdir(p, *a, **k)

        self.mp.setattr(builtins, "open", fake_open)
        self.mp.setattr(os, "open", fake_os_open)
        self.mp.setattr(os, "mkdir", fake_mkdir)

    def close(self) -> None:
        if self.mounted:
            subprocess.run(["umount", "-l", str(self.path)], check=False)


@pytest.fixture()
def tiny_fs(tmp_path, monkeypatch) -> Iterator[TinyFS]:
    fs = TinyFS(tmp_path / "tiny", monkeypatch)
    try:
        yield fs
    finally:
        fs.close()
