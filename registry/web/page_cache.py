"""Rendered pages kept per fleet version, role and query: a page viewed again on an unchanged
fleet is served from the text rendered the first time, after one cheap version lookup
(:func:`registry.store.versions.fleet_version`).

What is kept is a page's own part, its ``title`` and ``content`` blocks. The frame around it
(``base.html``: the navigation, the signed-in name, the log-out form with its per-session
CSRF token, the flashed messages) is rendered for every request through ``_page.html``, so no
per-session token or name is ever kept or shown to someone else. The key holds:

- the view and its arguments, and the query string as sent (every argument, in order);
- the role of the signed-in user: a page may show a technician's or a steward's buttons.
  While the page's own part is rendered, ``current_user`` is a stand-in that knows only the
  role (:class:`RoleOnly`), so a template that reads a name or an id there fails at once
  instead of keeping one user's name for the next; and ``csrf_token`` refuses;
- today's date (overdue marks, due lists);
- the fleet version: any event, hold, model, unit or site written through the store moves it,
  so a kept page is never shown for a fleet that has changed since.

A view hands :func:`page` a function that computes the template's context; it runs only on a
miss. It may instead return a response of its own (a form with problems, a 400): that is
answered as it is and not kept. Misses of one key are computed once while other requests wait
(``ResultCache``).
"""

from __future__ import annotations

import secrets
from collections.abc import Callable
from dataclasses import dataclass
from datetime import date

from flask import current_app, g, render_template, request
from flask_login import current_user
from flask_wtf.csrf import generate_csrf
from markupsafe import Markup

from ..extensions import db
from ..store.versions import fleet_version
from .access import ROLE_RANK
from .result_cache import ResultCache

PAGES_KEPT = 512  # rendered pages of tens of kB (a fleet page, a unit page, the dashboard)
LARGE_PAGES_KEPT = 48  # pages of up to a few hundred kB (a check result): about 16 MB


@dataclass(frozen=True)
class RoleOnly:
    """``current_user`` while a kept page is rendered: the role, nothing of the person."""

    role: str
    is_authenticated: bool = True

    def may(self, role: str) -> bool:
        return ROLE_RANK[self.role] >= ROLE_RANK[role]


def _no_token(*_args, **_kwargs):
    raise RuntimeError("a kept page may not hold a per-session CSRF token; put the form in "
                       "the frame or leave the page uncached")


@dataclass(frozen=True)
class Kept:
    title: Markup
    content: Markup
    body: bytes = b""  # ``content`` in UTF-8, encoded once when kept


class _Answer(Exception):  # noqa: N818 - not an error: carries a response past the cache
    def __init__(self, response):
        super().__init__()
        self.response = response


def pages(large: bool = False) -> ResultCache:
    """The app's kept pages (``large``: those of a few hundred kB, kept fewer)."""
    if large:
        return current_app.extensions.setdefault("withstand.large_pages",
                                                 ResultCache(LARGE_PAGES_KEPT))
    return current_app.extensions.setdefault("withstand.pages", ResultCache(PAGES_KEPT))


def version() -> str:
    """The fleet version as this request's session reads it, looked up once per request (a
    write through a service renews the session and forgets it: ``extensions._renew``)."""
    if "fleet_version" not in g:
        g.fleet_version = fleet_version(db.session)
    return g.fleet_version


def kept_data(name: str, key, compute: Callable[[], object]):
    """Data a page reads (every model's line, a list's count) kept per (``name``, ``key``,
    fleet version): read once for an unchanged fleet, whichever page asks."""
    cache = current_app.extensions.setdefault("withstand.page_data", ResultCache(PAGES_KEPT))
    return cache.get((name, key, version()), compute)


def shared_part(template: str, **context) -> Markup:
    """A fragment kept for every role and user alike (:func:`kept_data` is keyed by neither):
    rendered with no ``current_user`` and no CSRF token, so a template that reads either
    fails instead of keeping one person's view for all."""
    return Markup(render_template(template, **context, current_user=None,
                                  csrf_token=_no_token))


def page_key(*extra) -> tuple:
    """What a kept page of this request depends on (see the module's text)."""
    return (request.endpoint, tuple(sorted((request.view_args or {}).items())),
            tuple(request.args.items(multi=True)), current_user.role, date.today(),
            version(), extra)


def _render_blocks(template: str, context: dict) -> Kept:
    """The page's title and content blocks: the template rendered on the layout
    ``_kept.html`` (each kept page extends ``layout|default("base.html")``), which writes the
    two blocks with a marker of this render's own between them."""
    split = secrets.token_hex(16)
    text = render_template(template, **context, layout="_kept.html", split=split,
                           current_user=RoleOnly(current_user.role), csrf_token=_no_token)
    title, found, content = text.partition(split)
    assert found, "a kept page extends layout|default(\"base.html\")"
    if generate_csrf() in content:  # a macro imported without the context reads the global
        raise RuntimeError(f"{template}: a kept page may not hold a per-session CSRF token")
    return Kept(Markup(title.strip()), Markup(content), content.encode("utf-8"))


def page(template: str, compute: Callable[[], object], *extra, large: bool = False):
    """The page ``template`` for this request, its own part kept per :func:`page_key`
    (``extra``: anything else it depends on; ``large``: a page of a few hundred kB, kept in
    the smaller store). ``compute`` gives the template's context (a dict), or a response of
    its own, which is answered as it is and not kept."""
    def render() -> Kept:
        context = compute()
        if not isinstance(context, dict):
            raise _Answer(context)
        return _render_blocks(template, context)

    try:
        kept = pages(large).get(page_key(*extra), render)
    except _Answer as answer:
        return answer.response
    return _framed(kept)


# where the kept part goes in this request's frame: a marker of this process's own, which no
# text can know; the last one is taken, and the frame holds nothing typed after the content
_SLOT = "<!--kept-" + secrets.token_hex(16) + "-->"


def _framed(kept: Kept):
    """The response: this request's frame (``_page.html``) around the kept part, the frame
    rendered with a marker where the content goes and the kept part's UTF-8 bytes put there,
    so the content (a few hundred kB for a check result) is neither copied into the frame's
    text nor encoded again for every request."""
    frame = render_template("_page.html", kept=Kept(kept.title, Markup(_SLOT)))
    head, found, tail = frame.rpartition(_SLOT)
    assert found, "_page.html places the kept content"
    return current_app.response_class(
        b"".join((head.encode("utf-8"), kept.body, tail.encode("utf-8"))),
        mimetype="text/html")
