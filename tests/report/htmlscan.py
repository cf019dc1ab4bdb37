"""Read an HTML report back with the standard library's parser: tags, attributes, text, resource references."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from html.parser import HTMLParser

URL_ATTRIBUTES = {"src", "href", "xlink:href", "action", "formaction", "poster", "data", "srcset", "background"}
_CSS_URL = re.compile(r"url\(\s*['\"]?([^'\")]*)", re.I)
_CSS_IMPORT = re.compile(r"@import", re.I)


@dataclass
class Scan:
    """Everything the tests look at in a parsed page."""

    tags: list[tuple[str, dict[str, str | None]]] = field(default_factory=list)
    text: list[str] = field(default_factory=list)
    styles: list[str] = field(default_factory=list)
    open_stack_errors: list[str] = field(default_factory=list)

    @property
    def all_text(self) -> str:
        """Return the page's text content joined with spaces."""
        return " ".join(self.text)

    def tag_names(self) -> set[str]:
        """Return the set of element names used."""
        return {t for t, _ in self.tags}

    def resource_references(self) -> list[str]:
        """Return every URL the page refers to: URL attributes, and url(...) in style sheets and style attributes."""
        refs = []
        for _, attrs in self.tags:
            for name, value in attrs.items():
                if name in URL_ATTRIBUTES and value is not None:
                    refs.append(value)
                if name == "style" and value:
                    refs += _CSS_URL.findall(value)
        for css in self.styles:
            refs += _CSS_URL.findall(css)
        return refs

    def has_css_import(self) -> bool:
        """Return True when a style sheet pulls in another one."""
        return any(_CSS_IMPORT.search(css) for css in self.styles)


class _Parser(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.scan = Scan()
        self._in_style = False

    def handle_starttag(self, tag: str, attrs: list) -> None:
        self.scan.tags.append((tag, dict(attrs)))
        self._in_style = tag == "style"

    def handle_startendtag(self, tag: str, attrs: list) -> None:
        self.scan.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag: str) -> None:
        if tag == "style":
            self._in_style = False

    def handle_data(self, data: str) -> None:
        if self._in_style:
            self.scan.styles.append(data)
        elif data.strip():
            self.scan.text.append(data.strip())


def scan(html: str) -> Scan:
    """Return the :class:`Scan` of an HTML document."""
    parser = _Parser()
    parser.feed(html)
    parser.close()
    return parser.scan
