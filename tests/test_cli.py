"""The CLI through Click's runner (Flask's test runner hands it the test app)."""

import json

import pytest
import yaml
from sqlalchemy import select

from registry.cli import main
from registry.demo import demo_fleet_path
from registry.store import models as m


def run(runner, *args, input=None):
    return runner.invoke(main, list(args), input=input, catch_exceptions=False)


def test_init_is_idempotent(runner):
    result = run(runner, "init")
    assert result.exit_code == 0
    assert "latest migration" in result.output


def test_init_with_demo_loads_once(runner, database):
    first = run(runner, "init", "--with-demo")
    assert first.exit_code == 0 and "Loaded the demo fleet" in first.output
    assert "larkspur-steward" in first.output
    second = run(runner, "init", "--with-demo")
    assert "already holds a fleet" in second.output
    # a second run lists the demo logins that still work, each one checked by logging in
    assert "Demo logins that still work:" in second.output
    for password in ("larkspur-steward", "larkspur-tech", "larkspur-viewer"):
        assert password in second.output


def test_second_init_lists_only_demo_logins_that_still_work(runner, database):
    from registry.store.users import set_password
    run(runner, "init", "--with-demo")
    with database.transaction() as s:
        users = {u.username: u for u in s.scalars(select(m.User))}
        set_password(users["steward"], "a-password-of-our-own")
        users["viewer"].active = False
    second = run(runner, "init", "--with-demo")
    assert "larkspur-tech" in second.output
    assert "larkspur-steward" not in second.output and "larkspur-viewer" not in second.output
    with database.transaction() as s:
        for u in s.scalars(select(m.User)):
            u.active = False
    third = run(runner, "init", "--with-demo")
    assert "larkspur" not in third.output
    assert "No demo login works with its demo password here" in third.output
    assert "withstand user add NAME --role steward" in third.output


def test_import_export_round_trip(runner, tmp_path):
    result = run(runner, "import", str(demo_fleet_path()))
    assert result.exit_code == 0, result.output
    out1, out2 = tmp_path / "a.yaml", tmp_path / "b.json"
    assert run(runner, "export", str(out1)).exit_code == 0
    assert run(runner, "import", str(out1)).exit_code == 0
    assert run(runner, "export", str(out2)).exit_code == 0
    assert yaml.safe_load(out1.read_text()) == json.loads(out2.read_text())


def test_invalid_import_exits_2_and_names_the_field(runner, tmp_path, database):
    doc = yaml.safe_load(demo_fleet_path().read_text())
    doc["models"][0]["modes"][1]["max_input"] = "2 kA"
    bad = tmp_path / "bad.yaml"
    bad.write_text(yaml.safe_dump(doc))
    result = runner.invoke(main, ["import", str(bad)])
    assert result.exit_code == 2
    assert "models[0].modes[1].max_input: '2 kA' is a current" in result.output
    assert "Traceback" not in result.output
    with database.transaction() as s:
        assert s.scalar(select(m.Model)) is None


def test_import_dry_run_lists_and_writes_nothing(runner, database):
    result = run(runner, "import", "--dry-run", str(demo_fleet_path()))
    assert result.exit_code == 0
    assert "+ model kx-7" in result.output and "nothing was written" in result.output
    with database.transaction() as s:
        assert s.scalar(select(m.Model)) is None


def test_missing_file_and_bad_suffix(runner, tmp_path):
    result = runner.invoke(main, ["import", str(tmp_path / "nope.yaml")])
    assert result.exit_code == 2 and "does not exist" in result.output
    result = runner.invoke(main, ["export", str(tmp_path / "fleet.txt")])
    assert result.exit_code == 2 and "FILE: must end in" in result.output


def test_user_add_and_token(runner, database):
    result = run(runner, "user", "add", "ines", "--role", "steward", "--password-stdin",
                 input="a long enough password\n")
    assert result.exit_code == 0, result.output
    result = run(runner, "user", "token", "ines")
    token = result.output.strip().splitlines()[-1]
    assert token.startswith("wst_") and len(token) > 30
    from registry.store.users import user_for_token
    with database.transaction() as s:
        assert user_for_token(s, token).username == "ines"
        row = s.scalar(select(m.ApiToken))
        assert token not in row.digest  # stored hashed, not as given
    assert "Revoked 1 token" in run(runner, "user", "token", "ines", "--revoke").output
    with database.transaction() as s:
        assert user_for_token(s, token) is None


def test_user_add_prompts_for_password(runner):
    result = run(runner, "user", "add", "tobias", "--role", "viewer",
                 input="another good password\nanother good password\n")
    assert result.exit_code == 0 and "Created viewer 'tobias'" in result.output


@pytest.mark.parametrize("args, stdin, words", [
    (["user", "add", "x", "--role", "steward", "--password-stdin"], "long enough pw\n",
     "username: must be 2 to 64"),
    (["user", "add", "ines", "--role", "steward", "--password-stdin"], "short\n",
     "password: must be at least 10"),
    (["user", "add", "ines", "--role", "king", "--password-stdin"], "long enough pw\n",
     "'king' is not one of"),
    (["user", "token", "nobody"], None, "no user 'nobody'"),
])
def test_user_errors(runner, args, stdin, words):
    result = runner.invoke(main, args, input=stdin)
    assert result.exit_code == 2
    assert words in result.output


def test_unmigrated_database_says_run_init(tmp_path, monkeypatch):
    from click.testing import CliRunner
    monkeypatch.setenv("WITHSTAND_DATABASE_URL", f"sqlite:///{tmp_path / 'fresh.sqlite3'}")
    result = CliRunner().invoke(main, ["export", str(tmp_path / "x.yaml")])
    assert result.exit_code == 2
    assert "run `withstand init`" in result.output


def test_busy_port_is_a_message_not_a_traceback(runner, database):
    import socket
    with socket.socket() as busy:
        busy.bind(("127.0.0.1", 0))
        busy.listen()
        port = busy.getsockname()[1]
        result = runner.invoke(main, ["serve", "--port", str(port)])
    assert result.exit_code == 2
    assert "--port: cannot listen on 127.0.0.1" in result.output
    assert "Traceback" not in result.output


def test_unwritable_export_path_exits_2(runner, tmp_path):
    target = tmp_path / "not-a-folder"
    target.write_text("a file where a folder should be")
    result = runner.invoke(main, ["export", str(target / "fleet.yaml")])
    assert result.exit_code == 2 and "error:" in result.output
    assert "Traceback" not in result.output


def test_a_fleet_file_that_is_not_utf8_exits_2_naming_it(runner, tmp_path, database):
    path = tmp_path / "fleet.yaml"
    path.write_bytes("format: withstand-fleet/1\nsites: [{name: Bänk, altitude: 40 m}]\n"
                     .encode("cp1252"))
    result = runner.invoke(main, ["import", str(path)])
    assert result.exit_code == 2, result.output
    assert f"'{path}' is not UTF-8 text" in result.output
    assert "Traceback" not in result.output and isinstance(result.exception, SystemExit)
    with database.transaction() as s:
        assert s.scalar(select(m.Site)) is None


def test_import_reads_an_unquoted_ratio_as_that_ratio(runner, tmp_path, database):
    # YAML 1.1 would store 10:1 as 601 (base 60); the fleet file is read as YAML 1.2
    path = tmp_path / "fleet.yaml"
    path.write_text("format: withstand-fleet/1\nmodels:\n  - {key: dv-1, kind: hv-divider, "
                    "attenuation: 10:1}\n")
    assert run(runner, "import", str(path)).exit_code == 0
    with database.transaction() as s:
        assert s.scalar(select(m.Model.attenuation)) == 10.0
