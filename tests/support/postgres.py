"""A throw-away PostgreSQL server for the study-store tests: the distribution's own binaries
(Debian's postgresql package, installed by scripts/test), a fresh cluster in a temporary
directory owned by the `postgres` user, listening on a free loopback port, stopped at the end."""

from __future__ import annotations

import glob
import os
import shutil
import subprocess
import tempfile
import uuid
from pathlib import Path


def _bindir() -> Path:
    found = sorted(glob.glob("/usr/lib/postgresql/*/bin/initdb"), key=lambda p: int(Path(p).parts[4]))
    if not found:
        raise RuntimeError("the PostgreSQL server binaries (/usr/lib/postgresql/*/bin) are missing: "
                           "install the distribution's postgresql package (scripts/test does)")
    return Path(found[-1]).parent


class Postgres:
    def __init__(self, port: int):
        self.port = port
        self.bindir = _bindir()
        self.root = Path(tempfile.mkdtemp(prefix="taubudget-pg-"))
        self.data = self.root / "data"
        self.as_root = os.geteuid() == 0  # the server refuses to run as root: use `postgres`

    def _run(self, *args: str) -> None:
        cmd = [str(self.bindir / args[0]), *args[1:]]
        if self.as_root:
            cmd = ["runuser", "-u", "postgres", "--", *cmd]
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, timeout=180)

    def start(self) -> str:
        if self.as_root:
            os.chmod(self.root, 0o755)
            shutil.chown(self.root, "postgres", "postgres")
        self._run("initdb", "-D", str(self.data), "-U", "postgres", "-A", "trust", "--no-sync", "-E", "UTF8")
        options = f"-p {self.port} -h 127.0.0.1 -k {self.root} -F"
        self._run("pg_ctl", "-D", str(self.data), "-l", str(self.root / "server.log"), "-o", options,
                  "-w", "-t", "120", "start")
        return self.url("postgres")

    def url(self, database: str) -> str:
        return f"postgresql+psycopg://postgres@127.0.0.1:{self.port}/{database}"

    def new_database(self) -> str:
        import psycopg

        name = "t_" + uuid.uuid4().hex[:12]
        with psycopg.connect(f"host=127.0.0.1 port={self.port} user=postgres dbname=postgres",
                             autocommit=True) as conn:
            conn.execute(f'CREATE DATABASE "{name}"')
        return self.url(name)

    def stop(self) -> None:
        try:
            self._run("pg_ctl", "-D", str(self.data), "-m", "immediate", "-w", "stop")
        finally:
            shutil.rmtree(self.root, ignore_errors=True)
