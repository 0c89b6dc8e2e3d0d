"""Reading an HTML form as a browser would submit it."""

from html.parser import HTMLParser


class _Form(HTMLParser):
    """What a browser would send for the page's model form (``form.model-form``) as it
    stands: the text boxes, the checked boxes, each select's chosen option (the first when none
    is marked). Buttons are left out; a test adds the one it presses."""

    def __init__(self):
        super().__init__()
        self.fields: list[tuple[str, str]] = []
        self._in_form = False
        self._select: list | None = None  # [name, chosen, first]
        self.buttons: list[tuple[str, str]] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "form" and "model-form" in (a.get("class") or ""):
            self._in_form = True
        if not self._in_form:
            return
        if tag == "input":
            kind = a.get("type", "text")
            if kind == "checkbox":
                if "checked" in a:
                    self.fields.append((a["name"], a.get("value", "on")))
            elif kind not in ("submit", "button"):
                self.fields.append((a["name"], a.get("value") or ""))
        elif tag == "select":
            self._select = [a["name"], None, None]
        elif tag == "option" and self._select is not None:
            if self._select[2] is None:
                self._select[2] = a.get("value", "")
            if "selected" in a:
                self._select[1] = a.get("value", "")
        elif tag == "button":
            self.buttons.append((a.get("name", ""), a.get("value", "")))

    def handle_endtag(self, tag):
        if tag == "select" and self._select is not None:
            name, chosen, first = self._select
            self.fields.append((name, chosen if chosen is not None else first or ""))
            self._select = None
        elif tag == "form":
            self._in_form = False


def form_of(page: str) -> dict:
    parser = _Form()
    parser.feed(page)
    return dict(parser.fields)


def buttons_of(page: str) -> list[tuple[str, str]]:
    parser = _Form()
    parser.feed(page)
    return parser.buttons


