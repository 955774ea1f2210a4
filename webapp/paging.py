"""Pages of a long list: the entity, topic and recheck pages show their statements a page at a time.

A page is read from ``?page=N`` (1 if missing or not a number, the last page if past the end);
the database returns only that page's rows (LIMIT and OFFSET on indexed orderings), so a page
costs the same at three thousand statements as at three hundred thousand.
"""

from __future__ import annotations

from dataclasses import dataclass
from urllib.parse import urlencode

from flask import request

#: statements per page
PAGE_SIZE = 50


@dataclass(frozen=True)
class Page:
    """One page of a list of ``total`` items, numbered from 1."""

    number: int
    total: int
    size: int

    @property
    def pages(self) -> int:
        """How many pages the list has (at least one, even when empty)."""
        return max(1, -(-self.total // self.size))

    @property
    def offset(self) -> int:
        """How many items come before this page."""
        return (self.number - 1) * self.size

    @property
    def first(self) -> int:
        """The position (from 1) of the page's first item; 0 on an empty list."""
        return self.offset + 1 if self.total else 0

    @property
    def last(self) -> int:
        """The position of the page's last item."""
        return min(self.total, self.offset + self.size)

    def url(self, number: int) -> str:
        """This page's address with another page number, the other query values kept."""
        args = [(k, v) for k, v in request.args.items(multi=True) if k != "page"]
        if number > 1:
            args.append(("page", str(number)))
        return f"{request.path}?{urlencode(args)}" if args else request.path


def current_page(total: int, size: int | None = None) -> Page:
    """The page the request asks for, within the list's pages (``PAGE_SIZE`` items to a page)."""
    size = size or PAGE_SIZE
    try:
        number = int(request.args.get("page", "1"))
    except ValueError:
        number = 1
    page = Page(1, total, size)  # to count the pages
    return Page(min(max(number, 1), page.pages), total, size)
