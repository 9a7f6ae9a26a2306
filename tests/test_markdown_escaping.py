"""Text embedded in the Markdown pages stays text (issue 10, item 9).

Outside reference: markdown-it-py, a CommonMark renderer from the package registry (installed
with rich): an escaped hostile title must render as one plain paragraph or heading with no
link, image, HTML or emphasis element, and its visible text must be the original.
"""

from __future__ import annotations

import html
import re

import pytest
from markdown_it import MarkdownIt

from parcelcast.pages import markdown_text, render_page

HOSTILE = [
    "# Not a heading",
    "[click](http://example.invalid) and ![img](x.png)",
    "<script>alert(1)</script> & <b>bold</b>",
    "*stars* _under_ `code` ~~strike~~ | pipe",
    "1. not a list",
    "- not a list either",
    "> not a quote",
    "two\nlines\r\nand a tab\there",
    "back\\slash &amp; entity",
]


def _plain(rendered_html: str) -> str:
    return html.unescape(re.sub(r"<[^>]+>", "", rendered_html)).strip()


@pytest.mark.parametrize("text", HOSTILE)
def test_escaped_text_renders_as_itself_and_nothing_else(text):
    rendered = MarkdownIt("commonmark").enable("strikethrough").enable("table").render(
        markdown_text(text))
    tags = set(re.findall(r"<\s*([a-zA-Z0-9]+)", rendered))
    assert tags <= {"p"}, (text, rendered)
    assert _plain(rendered) == " ".join(text.split())


@pytest.mark.parametrize("text", HOSTILE)
def test_table_cells_stay_cells(text):
    row = f"| {markdown_text('name', line_start=False)} | {markdown_text(text, line_start=False)} |"
    doc = "| a | b |\n| --- | --- |\n" + row + "\n"
    rendered = MarkdownIt("commonmark").enable("table").render(doc)
    assert rendered.count("<td>") == 2
    cells = re.findall(r"<td>(.*?)</td>", rendered, flags=re.S)
    assert _plain(cells[1]) == " ".join(text.split())


def test_review_title_is_escaped_in_the_markdown_page():
    context_title = "[x](javascript:alert(1)) <img src=x>"
    page = render_page("brief.j2", "markdown", _minimal_brief_context(context_title))
    rendered = MarkdownIt("commonmark").render(page)
    assert "<a " not in rendered and "<img" not in rendered


def _minimal_brief_context(title):
    return dict(title=title, disclaimer="d", meta_line="m", summary=["s"], station_header=["level"], station_rows=[],
                figures=[], trajectory_rows=[], trajectory_reason="r", split_rows=[],
                split_reason="r", consistency_lines=[], profile_rows=[], profile_reason="r",
                cautions=[], warnings=[], method=["x"], credits="c")
