"""The rules of managing logins hold on every way in (registry/services/users.py): the
``withstand user`` commands exit 2 and the users page answers 400, each with a message naming
what is wrong, and nothing is written. Common practice (no source): an administrator cannot
lock themself out, and a disabled account holds no credential.

The demo logins are steward, tech and viewer (registry/demo.py)."""

from __future__ import annotations

import re

import pytest
from sqlalchemy import func, select

from registry.cli import main
from registry.store import models as m
from registry.store.users import user_for_token


def run(runner, *args, input=None, env=None):
    return runner.invoke(main, list(args), input=input, env=env, catch_exceptions=False)


def state(database) -> dict:
    """Every login's role and whether it is active, and the live tokens: what a refused
    command must leave as it was."""
    with database.transaction() as s:
        users = {u.username: (u.role, u.active, u.password_hash)
                 for u in s.scalars(select(m.User))}
        live = s.scalar(select(func.count()).select_from(m.ApiToken)
                        .where(m.ApiToken.revoked_at.is_(None)))
    return {"users": users, "live_tokens": live}


# -- the CLI -----------------------------------------------------------------------------------

def test_cli_user_add_prints_and_keeps_the_trimmed_name(runner, database):
    result = run(runner, "user", "add", "  ines  ", "--role", "steward",
                 "--display-name", "  Ines Marrow ", "--password-stdin",
                 input="a-long-password\n")
    assert result.exit_code == 0, result.output
    assert "Created steward 'ines'." in result.output
    with database.transaction() as s:
        row = s.scalar(select(m.User))
        assert (row.username, row.display_name) == ("ines", "Ines Marrow")


@pytest.mark.parametrize("args, words", [
    (["user", "role", "steward", "viewer", "--by", "steward"],
     "role: you cannot lower your own role; another steward can"),
    (["user", "deactivate", "steward", "--by", "steward"],
     "active: you cannot deactivate your own login; another steward can"),
    (["user", "role", "viewer", "steward", "--by", "tech"],
     "user 'tech' is a technician; managing users needs a steward"),
    (["user", "deactivate", "viewer", "--by", "viewer"],
     "user 'viewer' is a viewer; managing users needs a steward"),
    (["user", "role", "viewer", "technician"],
     "--by: name the user doing this"),
    (["user", "reactivate", "nobody", "--by", "steward"], "no user 'nobody'"),
])
def test_cli_refuses_what_the_rules_forbid_and_writes_nothing(runner, demo, args, words):
    before = state(demo)
    result = runner.invoke(main, args, env={"WITHSTAND_USER": ""})
    assert result.exit_code == 2, result.output
    assert words in result.output and "Traceback" not in result.output
    assert state(demo) == before


def test_cli_issues_no_token_to_a_deactivated_login_until_reactivated(runner, demo):
    result = run(runner, "user", "deactivate", "tech", "--by", "steward")
    assert result.exit_code == 0, result.output
    assert "'tech' is deactivated" in result.output
    before = state(demo)
    refused = runner.invoke(main, ["user", "token", "tech"])
    assert refused.exit_code == 2
    assert "reactivate the login before issuing a token" in refused.output
    assert "wst_" not in refused.output and state(demo) == before
    assert run(runner, "user", "reactivate", "tech", "--by", "steward").exit_code == 0
    issued = run(runner, "user", "token", "tech")
    assert issued.exit_code == 0, issued.output
    token = issued.output.strip().splitlines()[-1]
    with demo.transaction() as s:
        assert user_for_token(s, token).username == "tech"


def test_cli_deactivating_revokes_the_tokens_and_another_steward_may_change_a_role(runner, demo):
    token = run(runner, "user", "token", "viewer").output.strip().splitlines()[-1]
    result = run(runner, "user", "deactivate", "viewer", "--by", "steward")
    assert "1 token revoked" in result.output
    with demo.transaction() as s:
        assert user_for_token(s, token) is None
    assert run(runner, "user", "role", "tech", "steward", "--by", "steward").exit_code == 0
    # now a second steward may lower the first one's role
    result = run(runner, "user", "role", "steward", "viewer", "--by", "tech")
    assert result.exit_code == 0 and "'steward' is now viewer." in result.output
    with demo.transaction() as s:
        assert s.scalar(select(m.User.role).where(m.User.username == "steward")) == "viewer"


def test_cli_password_sets_a_new_one_and_refuses_a_short_one(runner, demo):
    before = state(demo)
    short = runner.invoke(main, ["user", "password", "tech", "--password-stdin"], input="short\n")
    assert short.exit_code == 2 and "password: must be at least 10" in short.output
    assert state(demo) == before
    done = run(runner, "user", "password", "tech", "--password-stdin",
               input="another-long-password\n")
    assert done.exit_code == 0 and "Set a new password for 'tech'." in done.output
    assert state(demo)["users"]["tech"][2] != before["users"]["tech"][2]


# -- the users page ----------------------------------------------------------------------------

def _csrf(client) -> str:
    page = client.get("/users/").get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def _user_id(database, username: str) -> int:
    with database.transaction() as s:
        return s.scalar(select(m.User.id).where(m.User.username == username))


@pytest.mark.parametrize("who, path, form, words", [
    ("steward", "role", {"role": "viewer"}, "you cannot lower your own role"),
    ("steward", "active", {"active": "0"}, "you cannot deactivate your own login"),
])
def test_page_refuses_a_steward_acting_on_their_own_login(client, demo, login_as, who, path,
                                                          form, words):
    login_as(client, "steward", "larkspur-steward")
    before = state(demo)
    response = client.post(f"/users/{_user_id(demo, who)}/{path}",
                           data=dict(form, csrf_token=_csrf(client)))
    assert response.status_code == 400 and words in response.get_data(as_text=True)
    assert state(demo) == before


def test_page_issues_no_token_to_a_deactivated_login(client, demo, login_as):
    login_as(client, "steward", "larkspur-steward")
    tech = _user_id(demo, "tech")
    token = _csrf(client)
    assert client.post(f"/users/{tech}/active",
                       data={"csrf_token": token, "active": "0"}).status_code == 302
    before = state(demo)
    response = client.post(f"/users/{tech}/tokens", data={"csrf_token": token})
    page = response.get_data(as_text=True)
    assert response.status_code == 400
    assert "reactivate the login before issuing a token" in page and "wst_" not in page
    assert state(demo) == before


def test_page_shows_the_new_token_and_the_list_read_after_the_write(client, demo, login_as):
    """The page that shows a new token is rendered in the request that issued it: the list
    under it must already count that token (read after the service's write, not from the
    snapshot the request began with)."""
    login_as(client, "steward", "larkspur-steward")
    viewer = _user_id(demo, "viewer")
    page = client.post(f"/users/{viewer}/tokens",
                       data={"csrf_token": _csrf(client)}).get_data(as_text=True)
    issued = re.search(r'class="token-value">(wst_[^<]+)<', page).group(1)
    row = re.search(r"<td>viewer</td>.*?</tr>", page, re.S).group(0)
    assert "1 live" in row
    with demo.transaction() as s:
        assert user_for_token(s, issued).username == "viewer"


def test_page_add_keeps_the_trimmed_name(client, demo, login_as):
    login_as(client, "steward", "larkspur-steward")
    response = client.post("/users/", data={"csrf_token": _csrf(client), "username": " ada ",
                                            "display_name": " Ada Pell  ", "role": "viewer",
                                            "password": "a-long-password"})
    assert response.status_code == 302
    assert "Added ada as viewer." in client.get("/users/").get_data(as_text=True)
    with demo.transaction() as s:
        row = s.scalar(select(m.User).where(m.User.username == "ada"))
        assert row.display_name == "Ada Pell"


def test_cli_import_is_not_recorded_under_a_deactivated_login(runner, demo, tmp_path):
    from registry.demo import demo_fleet_path
    assert run(runner, "user", "deactivate", "tech", "--by", "steward").exit_code == 0
    with demo.transaction() as s:
        changes = s.scalar(select(func.count()).select_from(m.Change))
    result = runner.invoke(main, ["import", str(demo_fleet_path()), "--by", "tech"])
    assert result.exit_code == 2 and "the login 'tech' is deactivated" in result.output
    with demo.transaction() as s:
        assert s.scalar(select(func.count()).select_from(m.Change)) == changes
