"""A throwaway PostgreSQL cluster for one test session.

``initdb`` refuses to run as root, so as root the cluster belongs to the ``postgres`` user and
lives in a postgres-owned ``mktemp -d`` under /tmp; as anyone else it belongs to that user. The
server listens on 127.0.0.1 on a free port with its socket in the same directory, runs without
fsync (a test cluster holds nothing worth keeping), and every session gets a ``lock_timeout``
and a ``statement_timeout`` so a forgotten open transaction fails a test instead of hanging it.

Use the session fixture ``pg_cluster`` (tests marked ``postgres``) and
``pg_cluster.new_database()`` for an empty database per test.
"""

from __future__ import annotations

import glob
import itertools
import os
import pwd
import shutil
import socket
import subprocess
import tempfile
from pathlib import Path

import pytest

#: Server settings: durability off (a throwaway cluster), waits capped.
SERVER_SETTINGS = {
    "listen_addresses": "127.0.0.1",
    "fsync": "off",
    "synchronous_commit": "off",
    "full_page_writes": "off",
    "lock_timeout": "5s",
    "statement_timeout": "60s",
    "max_connections": "40",
}


def find_bin_dir() -> Path | None:
    """The newest /usr/lib/postgresql/<version>/bin that holds initdb and pg_ctl, or None."""
    candidates = []
    for initdb in glob.glob("/usr/lib/postgresql/*/bin/initdb"):
        bin_dir = Path(initdb).parent
        version = bin_dir.parent.name
        if (bin_dir / "pg_ctl").exists():
            candidates.append((int(version) if version.isdigit() else 0, bin_dir))
    return max(candidates)[1] if candidates else None


def free_port() -> int:
    """A TCP port on 127.0.0.1 that nothing listens on right now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class PgCluster:
    """One throwaway cluster: ``start()``, ``new_database()``, ``stop()``."""

    def __init__(self, bin_dir: Path):
        self.bin_dir = bin_dir
        self.as_postgres = os.geteuid() == 0
        self.dir: Path | None = None
        self.port: int | None = None
        self._names = itertools.count(1)

    @property
    def data_dir(self) -> Path:
        return self.dir / "data"

    def _run(self, *args: str, timeout: float = 60) -> subprocess.CompletedProcess:
        cmd = list(args)
        if self.as_postgres:
            cmd = ["runuser", "-u", "postgres", "--", *cmd]
        return subprocess.run(cmd, check=True, capture_output=True, text=True, timeout=timeout)

    def start(self) -> PgCluster:
        self.dir = Path(tempfile.mkdtemp(prefix="ringtest-pg-", dir="/tmp"))
        if self.as_postgres:
            pw = pwd.getpwnam("postgres")
            os.chown(self.dir, pw.pw_uid, pw.pw_gid)
        self._run(str(self.bin_dir / "initdb"), "-D", str(self.data_dir), "-U", "postgres",
                  "-A", "trust", "-E", "UTF8", "--no-sync", "--locale=C.UTF-8")
        self.port = free_port()
        options = " ".join(f"-c {k}={v}" for k, v in SERVER_SETTINGS.items())
        options += f" -p {self.port} -k {self.dir}"
        try:
            self._run(str(self.bin_dir / "pg_ctl"), "-D", str(self.data_dir),
                      "-l", str(self.dir / "server.log"), "-w", "-t", "30",
                      "-o", options, "start")
        except subprocess.CalledProcessError as exc:
            log = (self.dir / "server.log")
            detail = log.read_text() if log.exists() else ""
            raise RuntimeError(f"pg_ctl start failed: {exc.stderr}\n{detail}") from exc
        return self

    def url(self, database: str = "postgres") -> str:
        """An SQLAlchemy URL for the psycopg 3 driver."""
        return f"postgresql+psycopg://postgres@127.0.0.1:{self.port}/{database}"

    def psql(self, sql: str, database: str = "postgres") -> str:
        """Run one SQL statement through psql (outside any transaction); its output."""
        result = self._run(str(self.bin_dir / "psql"), "-h", str(self.dir), "-p",
                           str(self.port), "-U", "postgres", "-d", database, "-v",
                           "ON_ERROR_STOP=1", "-Atc", sql)
        return result.stdout

    def new_database(self) -> str:
        """Create an empty database; its SQLAlchemy URL."""
        name = f"test_{os.getpid()}_{next(self._names)}"
        self.psql(f'CREATE DATABASE "{name}" TEMPLATE template0')
        return self.url(name)

    def stop(self) -> None:
        if self.dir is None:
            return
        try:
            if self.port is not None and (self.data_dir / "postmaster.pid").exists():
                self._run(str(self.bin_dir / "pg_ctl"), "-D", str(self.data_dir), "-m", "fast",
                          "-w", "-t", "30", "stop")
        finally:
            shutil.rmtree(self.dir, ignore_errors=True)
            self.dir = None


@pytest.fixture(scope="session")
def pg_cluster(request):
    """A running throwaway cluster for the whole session, stopped by a finaliser."""
    bin_dir = find_bin_dir()
    if bin_dir is None:
        pytest.fail("PostgreSQL server binaries not found under /usr/lib/postgresql/*/bin "
                    "(.ci/run installs them; deselect with -m 'not postgres')")
    cluster = PgCluster(bin_dir)
    request.addfinalizer(cluster.stop)
    return cluster.start()
