"""Settings that keep a server safe: debug only when asked for, SQLite writers that wait their turn,
upload limits with sane defaults. Each case starts a fresh interpreter, because settings are read once.

SQLite locking as documented at sqlite.org: "Transaction" (lang_transaction.html: a deferred
transaction that reads and then writes gets SQLITE_BUSY if another connection wrote in between, and
the busy handler is not invoked for that upgrade; BEGIN IMMEDIATE takes the write lock at once) and
"Write-Ahead Logging" (wal.html, 2.2: SQLITE_BUSY_SNAPSHOT).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
GOOD_KEY = "k" * 20 + "-not-a-real-key-but-long-enough-0123456789"
OWN = {
    "SECRET_KEY",
    "ALLOWED_HOSTS",
    "SECURE_HTTPS",
    "SEALWALK_DEBUG",
    "DJANGO_SETTINGS_MODULE",
    "DATABASE_URL",
    "LIST_MAX_AGE",
}
OWN |= {k for k in os.environ if k.startswith("UPLOAD_")}


# Never opened by these checks (settings only); named so that a stray connection would not touch real data.
UNUSED_DB = f"sqlite:///{Path(tempfile.gettempdir()) / 'sealwalk-settings-check-unused.sqlite3'}"


def run(env: dict, code: str, *, argv: list[str] | None = None, db: str = UNUSED_DB):
    """Run ``code`` with qa.settings and exactly the Sealwalk variables in ``env`` (none inherited)."""
    base = {k: v for k, v in os.environ.items() if k not in OWN}
    base.update({"DJANGO_SETTINGS_MODULE": "qa.settings", "DATABASE_URL": db, **env})
    prelude = f"import sys; sys.argv = {argv or ['manage.py', 'check']!r}\n"
    return subprocess.run(
        [sys.executable, "-c", prelude + code],
        cwd=ROOT,
        env=base,
        capture_output=True,
        text=True,
        timeout=120,
    )


PRINT_DEBUG = "import django; django.setup()\nfrom django.conf import settings\nprint(settings.DEBUG)"


def refused(result, named: str) -> bool:
    return result.returncode != 0 and "ImproperlyConfigured" in result.stderr and named in result.stderr


def test_allowed_hosts_without_debug_variable_refuses_the_development_key():
    """The reported case: ALLOWED_HOSTS set, SEALWALK_DEBUG unset ran with debug on and the dev key."""
    result = run({"ALLOWED_HOSTS": "walls.example.org"}, PRINT_DEBUG)
    assert refused(result, "SECRET_KEY"), (result.stdout, result.stderr[-600:])


def test_allowed_hosts_and_real_key_without_debug_variable_run_with_debug_off():
    result = run({"ALLOWED_HOSTS": "walls.example.org", "SECRET_KEY": GOOD_KEY}, PRINT_DEBUG)
    assert result.returncode == 0, result.stderr[-600:]
    assert result.stdout.split() == ["False"]


def test_no_environment_at_all_is_production_and_refuses_to_start():
    assert refused(run({}, PRINT_DEBUG), "SECRET_KEY")


def test_real_key_without_allowed_hosts_refuses_to_start():
    assert refused(run({"SECRET_KEY": GOOD_KEY}, PRINT_DEBUG), "ALLOWED_HOSTS")


@pytest.mark.parametrize(("value", "debug"), [("1", True), ("true", True), ("yes", True), ("0", False)])
def test_debug_is_on_only_when_the_variable_asks_for_it(value, debug):
    env = {"SEALWALK_DEBUG": value, "SECRET_KEY": GOOD_KEY, "ALLOWED_HOSTS": "walls.example.org"}
    result = run(env, PRINT_DEBUG)
    assert result.returncode == 0, result.stderr[-600:]
    assert result.stdout.split() == [str(debug)]


def test_empty_debug_variable_counts_as_unset_and_is_production():
    assert refused(
        run({"SEALWALK_DEBUG": "", "ALLOWED_HOSTS": "walls.example.org"}, PRINT_DEBUG), "SECRET_KEY"
    )


def test_demo_command_asks_for_debug_itself():
    result = run({}, PRINT_DEBUG, argv=["manage.py", "demo", "--no-serve"])
    assert result.returncode == 0, result.stderr[-600:]
    assert result.stdout.split() == ["True"]


def test_explicit_debug_off_wins_over_the_demo_command():
    env = {"SEALWALK_DEBUG": "0", "SECRET_KEY": GOOD_KEY, "ALLOWED_HOSTS": "walls.example.org"}
    result = run(env, PRINT_DEBUG, argv=["manage.py", "demo"])
    assert result.returncode == 0 and result.stdout.split() == ["False"], result.stderr[-600:]


@pytest.mark.parametrize("command", ["runserver", "migrate", "shell"])
def test_other_commands_do_not_get_debug(command):
    assert refused(run({}, PRINT_DEBUG, argv=["manage.py", command]), "SECRET_KEY")


@pytest.mark.slow
def test_demo_command_sets_up_and_loads_with_no_environment(tmp_path):
    """What the README's first command does on a fresh machine, minus serving."""
    base = {k: v for k, v in os.environ.items() if k not in OWN}
    base.update({"SEALWALK_DATA_DIR": str(tmp_path), "DATABASE_URL": ""})
    result = subprocess.run(
        [sys.executable, "manage.py", "demo", "--no-serve", "--no-photos"],
        cwd=ROOT,
        env=base,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert result.returncode == 0, result.stderr[-1500:]
    assert "Loaded" in result.stdout and (tmp_path / "db.sqlite3").exists()


# --- SQLite under concurrent writers ------------------------------------------------------------------

LOCK_PROBE = r"""
import json, threading, time
import django; django.setup()
from django.conf import settings
from django.db import OperationalError, connection, transaction
options = settings.DATABASES["default"]["OPTIONS"]
if MODE == "deferred":
    options.pop("transaction_mode")  # what the settings did before: the busy timeout alone
with connection.cursor() as c:
    c.execute("CREATE TABLE IF NOT EXISTS t (who TEXT)")
connection.close()
has_read, errors, waited = threading.Event(), [], {}

def read_then_write():
    try:
        with transaction.atomic(), connection.cursor() as c:
            c.execute("SELECT count(*) FROM t")
            has_read.set()
            time.sleep(0.5)  # the other writer arrives meanwhile
            c.execute("INSERT INTO t VALUES ('A')")
    except OperationalError as exc:
        errors.append(str(exc))
    finally:
        connection.close()

def write():
    has_read.wait()
    start = time.monotonic()
    try:
        with transaction.atomic(), connection.cursor() as c:
            c.execute("INSERT INTO t VALUES ('B')")
    except OperationalError as exc:
        errors.append(str(exc))
    finally:
        waited["B"] = time.monotonic() - start
        connection.close()

threads = [threading.Thread(target=read_then_write), threading.Thread(target=write)]
[t.start() for t in threads]
[t.join() for t in threads]
with connection.cursor() as c:
    c.execute("SELECT who FROM t ORDER BY who")
    rows = [r[0] for r in c.fetchall()]
print(json.dumps({"errors": errors, "rows": rows, "waited": waited["B"], "options": options}))
"""


def lock_probe(tmp_path, mode: str) -> dict:
    result = run(
        {"SEALWALK_DEBUG": "1"},
        f"MODE = {mode!r}\n" + LOCK_PROBE,
        db=f"sqlite:///{tmp_path / 'lock.sqlite3'}",
    )
    assert result.returncode == 0, result.stderr[-1500:]
    return json.loads(result.stdout.strip().splitlines()[-1])


def test_sqlite_settings_use_immediate_transactions_and_a_busy_timeout():
    from django.conf import settings

    assert settings.SQLITE_OPTIONS["transaction_mode"] == "IMMEDIATE"
    assert settings.SQLITE_OPTIONS["timeout"] >= 5
    assert "journal_mode=WAL" in settings.SQLITE_OPTIONS["init_command"]


def test_sqlite_writer_that_read_first_waits_for_the_lock_instead_of_failing(tmp_path):
    answer = lock_probe(tmp_path, "immediate")
    assert answer["options"]["transaction_mode"] == "IMMEDIATE"
    assert answer["errors"] == [] and answer["rows"] == ["A", "B"]
    assert answer["waited"] > 0.3, "the second writer queued behind the first"


def test_sqlite_deferred_transactions_fail_at_once_which_is_why_immediate_is_set(tmp_path):
    """The failure the settings prevent, reproduced: without BEGIN IMMEDIATE the read-then-write
    transaction gets "database is locked" although the busy timeout is 20 s."""
    answer = lock_probe(tmp_path, "deferred")
    assert answer["errors"] == ["database is locked"] and answer["rows"] == ["B"]


# --- upload limits ----------------------------------------------------------------------------------

UPLOAD_NAMES = [
    "UPLOAD_MAX_OPEN_PER_USER",
    "UPLOAD_MAX_OPEN_PER_JOB",
    "UPLOAD_MAX_PENDING_BYTES_PER_USER",
    "UPLOAD_MAX_PENDING_BYTES_PER_JOB",
    "UPLOAD_ABANDONED_AFTER_HOURS",
]


def test_upload_limits_have_defaults_that_fit_a_walk():
    from django.conf import settings

    values = {name: getattr(settings, name) for name in UPLOAD_NAMES}
    # A walk sends its photos one at a time; a person's limit still holds several max-size photos.
    assert 1 < values["UPLOAD_MAX_OPEN_PER_USER"] <= values["UPLOAD_MAX_OPEN_PER_JOB"]
    assert values["UPLOAD_MAX_PENDING_BYTES_PER_USER"] >= 2 * settings.PHOTO_MAX_BYTES
    assert values["UPLOAD_MAX_PENDING_BYTES_PER_USER"] <= values["UPLOAD_MAX_PENDING_BYTES_PER_JOB"]
    # The reported attack (200 uploads of 20 MB by one person) is over both per-user limits.
    assert values["UPLOAD_MAX_OPEN_PER_USER"] < 200
    assert values["UPLOAD_MAX_PENDING_BYTES_PER_USER"] < 200 * 20 * 1024 * 1024
    assert values["UPLOAD_ABANDONED_AFTER_HOURS"] >= 24  # a phone offline overnight keeps its uploads


def test_upload_limits_come_from_the_environment():
    env = {"SEALWALK_DEBUG": "1", **{name: str(7 + i) for i, name in enumerate(UPLOAD_NAMES)}}
    code = "import django; django.setup()\nfrom django.conf import settings\n"
    code += f"print([getattr(settings, n) for n in {UPLOAD_NAMES!r}])"
    result = run(env, code)
    assert result.returncode == 0, result.stderr[-600:]
    assert result.stdout.strip() == str([7, 8, 9, 10, 11])


@pytest.mark.parametrize(
    ("value", "rule"), [("lots", "whole number"), ("0", "1 or more"), ("-3", "1 or more")]
)
def test_bad_upload_limit_stops_start_up_naming_the_variable(value, rule):
    result = run({"SEALWALK_DEBUG": "1", "UPLOAD_MAX_OPEN_PER_USER": value}, PRINT_DEBUG)
    assert refused(result, "UPLOAD_MAX_OPEN_PER_USER") and rule in result.stderr, result.stderr[-600:]


# --- reads that may be a moment old; the data folder -----------------------------------------------


def test_list_max_age_defaults_to_seconds_and_comes_from_the_environment():
    code = "import django; django.setup()\nfrom django.conf import settings\nprint(settings.LIST_MAX_AGE)"
    default = run({"SEALWALK_DEBUG": "1"}, code)
    assert default.returncode == 0 and 0 < int(default.stdout.strip()) <= 10, default.stderr[-600:]
    assert run({"SEALWALK_DEBUG": "1", "LIST_MAX_AGE": "0"}, code).stdout.strip() == "0"
    bad = run({"SEALWALK_DEBUG": "1", "LIST_MAX_AGE": "-1"}, PRINT_DEBUG)
    assert refused(bad, "LIST_MAX_AGE") and "0 or more" in bad.stderr


def test_a_data_folder_not_made_yet_is_made(tmp_path):
    folder = tmp_path / "new" / "data"
    result = run({"SEALWALK_DEBUG": "1", "SEALWALK_DATA_DIR": str(folder)}, PRINT_DEBUG)
    assert result.returncode == 0, result.stderr[-600:]
    assert folder.is_dir()


def test_a_data_folder_that_cannot_be_made_stops_start_up_naming_the_variable(tmp_path):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    result = run({"SEALWALK_DEBUG": "1", "SEALWALK_DATA_DIR": str(blocker / "data")}, PRINT_DEBUG)
    assert refused(result, "SEALWALK_DATA_DIR"), result.stderr[-600:]
