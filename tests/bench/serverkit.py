"""A real server for the load benchmark and the fault tests: a fresh database, gunicorn, its worker PIDs.

``prepared_server()`` makes a throwaway database (a new PostgreSQL database next to ``DATABASE_URL``
when that points at PostgreSQL, else a SQLite file), migrates it, loads a small invented job with
an inspector, crews and owners plus API tokens, and starts gunicorn with several sync workers on a
free loopback port. Everything is removed on exit; processes are stopped by their own PIDs.
"""

from __future__ import annotations

import contextlib
import json
import os
import secrets
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.parse
import urllib.request
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
PASSWORD = "fault-and-load-9"

LOADER = r"""
import json, sys
from django.contrib.auth import get_user_model
from rest_framework.authtoken.models import Token
from qa.models import Job, Member, Wall, WallType
spec = json.loads(sys.argv[1])
User = get_user_model()
job = Job.objects.create(name="Larkspur Court (load test)", units="metric")
curve = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]
wt = WallType.objects.create(job=job, code="L1", name="Steel stud, two layers each side",
                             construction="steel_stud", tl=curve, tl_source="lab", design_rating=50,
                             thickness_m=0.15)
walls = []
for i in range(spec["walls"]):
    w = Wall.objects.create(job=job, wall_type=wt, tag=f"{1 + i // 20}-{i % 20:02d}", level=str(1 + i // 20),
                            length_m=5.0, height_m=2.7, target_rating=50)
    w.add_template_seal_points()
    walls.append(w.pk)
tokens = {}
for name, role, trade in spec["people"]:
    u = User.objects.create_user(name, password=spec["password"])
    Member.objects.create(job=job, user=u, role=role, trade=trade)
    tokens[name] = Token.objects.create(user=u).key
print(json.dumps({"job": job.pk, "walls": walls, "tokens": tokens}))
"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@dataclass
class Server:
    url: str
    job: int
    walls: list[int]
    tokens: dict[str, str]
    env: dict
    master: subprocess.Popen
    vendor: str
    db_name: str
    log: Path
    extra: dict = field(default_factory=dict)

    def workers(self) -> list[int]:
        """PIDs of the gunicorn workers (children of the master), read from /proc."""
        pids = []
        for entry in Path("/proc").iterdir():
            if not entry.name.isdigit():
                continue
            try:
                stat = (entry / "stat").read_text()
            except OSError:
                continue
            ppid = int(stat.rsplit(")", 1)[1].split()[1])
            if ppid == self.master.pid:
                pids.append(int(entry.name))
        return sorted(pids)

    def kill_workers(self) -> list[int]:
        """SIGKILL every worker (the one serving the request among them); the master starts new ones."""
        pids = self.workers()
        for pid in pids:
            with contextlib.suppress(ProcessLookupError):
                os.kill(pid, signal.SIGKILL)
        return pids

    def wait_ready(self, timeout: float = 30) -> None:
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            try:
                with urllib.request.urlopen(self.url + "/login/", timeout=2) as r:
                    if r.status == 200:
                        return
            except OSError:
                time.sleep(0.1)
        raise RuntimeError(f"gunicorn did not answer in {timeout} s; log:\n{self.log.read_text()[-2000:]}")

    def request(self, method: str, path: str, user: str, body=None, *, headers=None, timeout: float = 60):
        """One HTTP request with the user's token; returns (status, parsed JSON or bytes)."""
        data = None
        hdrs = {"Authorization": f"Token {self.tokens[user]}"}
        if isinstance(body, dict | list):
            data = json.dumps(body).encode()
            hdrs["Content-Type"] = "application/json"
        elif isinstance(body, tuple):  # (content type, bytes)
            hdrs["Content-Type"], data = body
        hdrs.update(headers or {})
        req = urllib.request.Request(self.url + path, data=data, method=method, headers=hdrs)
        try:
            with urllib.request.urlopen(req, timeout=timeout) as r:
                raw = r.read()
                status = r.status
        except urllib.error.HTTPError as exc:
            raw, status = exc.read(), exc.code
        try:
            return status, json.loads(raw)
        except ValueError:
            return status, raw


def _pg_admin(url: str):
    import psycopg

    return psycopg.connect(url, autocommit=True)


@contextlib.contextmanager
def prepared_server(
    *,
    workers: int = 3,
    walls: int = 5,
    people: list | None = None,
    threads: int = 1,
    production: bool = False,
) -> Iterator[Server]:
    """The server, in debug (static files straight from the source) or as deployed (``production``:
    debug off, so no SQL statement is logged in memory, a random secret key, loopback hosts only)."""
    people = people or [("insp", "inspector", ""), ("elec", "crew", "electrical"), ("own", "owner", "")]
    base_url = os.environ.get("DATABASE_URL", "")
    tmp = Path(tempfile.mkdtemp(prefix="sealwalk-srv-"))
    vendor = "postgresql" if base_url.startswith("postgres") else "sqlite"
    db_name = ""
    if vendor == "postgresql":
        db_name = f"sealwalk_srv_{secrets.token_hex(4)}"
        with _pg_admin(base_url) as conn:
            conn.execute(f'CREATE DATABASE "{db_name}"')
        parts = urllib.parse.urlparse(base_url)
        db_url = parts._replace(path="/" + db_name).geturl()
    else:
        db_url = f"sqlite:///{tmp / 'db.sqlite3'}"
    env = {
        **os.environ,
        "DATABASE_URL": db_url,
        "SEALWALK_DATA_DIR": str(tmp),
        "SEALWALK_DEBUG": "0" if production else "1",
        "DJANGO_SETTINGS_MODULE": "qa.settings",
        "PYTHONPATH": str(ROOT),
    }
    if production:
        env.update(SECRET_KEY=secrets.token_urlsafe(48), ALLOWED_HOSTS="127.0.0.1,localhost")
    env.pop("DJANGO_ALLOW_ASYNC_UNSAFE", None)
    py = sys.executable
    master = None
    log = tmp / "gunicorn.log"
    try:
        setup = [["migrate", "-v0"], ["createcachetable"]]
        if production:  # as deployed: hashed, compressed static files
            setup.append(["collectstatic", "--noinput", "-v0"])
        for cmd in setup:
            subprocess.run(
                [py, "manage.py", *cmd], cwd=ROOT, env=env, check=True, capture_output=True, timeout=300
            )
        spec = json.dumps({"walls": walls, "people": people, "password": PASSWORD})
        out = subprocess.run(
            [py, "manage.py", "shell", "-c", LOADER.replace("sys.argv[1]", repr(spec))],
            cwd=ROOT,
            env=env,
            check=True,
            capture_output=True,
            text=True,
            timeout=300,
        )
        loaded = json.loads(out.stdout.strip().splitlines()[-1])
        port = free_port()
        gunicorn = str(Path(py).with_name("gunicorn"))
        logf = open(log, "w")  # noqa: SIM115 - closed with the server
        master = subprocess.Popen(
            [
                gunicorn,
                "qa.wsgi",
                "-w",
                str(workers),
                "--threads",
                str(threads),
                "-b",
                f"127.0.0.1:{port}",
                "--timeout",
                "60",
                "--graceful-timeout",
                "2",
                "--log-level",
                "warning",
            ],
            cwd=ROOT,
            env=env,
            stdout=logf,
            stderr=subprocess.STDOUT,
        )
        server = Server(
            f"http://127.0.0.1:{port}",
            loaded["job"],
            loaded["walls"],
            loaded["tokens"],
            env,
            master,
            vendor,
            db_name,
            log,
            {"db_url": db_url, "tmp": tmp},
        )
        server.wait_ready()
        yield server
    finally:
        if master is not None:
            master.send_signal(signal.SIGTERM)
            try:
                master.wait(timeout=15)
            except subprocess.TimeoutExpired:
                master.kill()
                master.wait()
        if vendor == "postgresql" and db_name:
            with _pg_admin(base_url) as conn:
                conn.execute(f'DROP DATABASE IF EXISTS "{db_name}" WITH (FORCE)')
        import shutil

        shutil.rmtree(tmp, ignore_errors=True)


def db_query(server: Server, sql: str, params: tuple = ()) -> list[tuple]:
    """Read the server's database directly (the oracle for 'exactly the records sent')."""
    if server.vendor == "postgresql":
        with _pg_admin(server.extra["db_url"]) as conn:
            return conn.execute(sql, params).fetchall()
    import sqlite3

    with contextlib.closing(sqlite3.connect(server.extra["tmp"] / "db.sqlite3")) as conn:
        return conn.execute(sql.replace("%s", "?"), params).fetchall()
