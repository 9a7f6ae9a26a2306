"""Pages in HTML and Markdown from one template each (jinja2), so the two cannot drift.

What belongs here: the template environment and :func:`render_page`.  A page template
(``parcelcast/templates/NAME.j2``) is written once with the macros ``page_start``,
``heading``, ``para``, ``bullets``, ``table``, ``figure``, ``notice``, ``meta`` and
``page_end``; it is rendered with the HTML dialect (``_html.j2``, which escapes text) and
with the Markdown dialect (``_markdown.j2``).
"""

from __future__ import annotations

import base64
import functools
import re
from pathlib import Path

DIALECTS = {"html": "_html.j2", "markdown": "_markdown.j2"}


@functools.lru_cache(maxsize=1)
def _environment():
    import jinja2

    env = jinja2.Environment(loader=jinja2.PackageLoader("parcelcast", "templates"),
                             autoescape=False, undefined=jinja2.StrictUndefined,
                             trim_blocks=False, lstrip_blocks=True, keep_trailing_newline=True)
    env.filters["md"] = markdown_text
    env.filters["cell"] = functools.partial(markdown_text, line_start=False)  # "|" escaped too
    return env


#: characters that open Markdown constructs anywhere in a line (emphasis, code, links,
#: images, raw HTML, tables, strike-through, escapes)
_MARKDOWN_INLINE = re.compile(r"([\\`*_\[\]<>|~])")
#: what opens a block at the start of a line: heading, quote, list item, numbered item
_MARKDOWN_BLOCK_START = re.compile(r"^(\s*)([#>+\-]|\d+(?=[.)]))")


def markdown_text(value, line_start: bool = True) -> str:
    """``value`` as literal Markdown text: on one line, its special characters escaped.

    Embedded text (a case title, a station name, a sentence) must not turn into a heading,
    a link, an image or raw HTML in the Markdown page; "&" becomes an entity so that no
    character reference is formed.  Ordinary punctuation (".", ":", "-" inside a line) is
    left alone so the raw file stays readable.  ``line_start=False`` (table cells, where
    no block can open) leaves a leading "-" or "1." as it is.
    """
    text = " ".join(str(value).split())  # newlines and control white space folded
    text = "".join(ch for ch in text if ch.isprintable())
    text = text.replace("&", "&amp;")
    text = _MARKDOWN_INLINE.sub(r"\\\1", text)
    if not line_start:
        return text
    head = _MARKDOWN_BLOCK_START.match(text)
    if head is None:
        return text
    if head.group(2).isdigit():  # "1." -> "1\.": the escape goes on the punctuation
        cut = head.end()
        return text[:cut] + "\\" + text[cut:]
    return head.group(1) + "\\" + text[head.start(2):]


def render_page(name: str, fmt: str, context: dict) -> str:
    """Render template ``name`` (e.g. ``"brief.j2"``) as ``fmt`` ("html" or "markdown")."""
    if fmt not in DIALECTS:
        raise ValueError(f"page format must be one of {', '.join(DIALECTS)}, not {fmt!r}")
    text = _environment().get_template(name).render(dialect=DIALECTS[fmt], **context)
    while "\n\n\n" in text:  # blank lines left by empty blocks
        text = text.replace("\n\n\n", "\n\n")
    return text.strip() + "\n"


def data_uri(path) -> str:
    """A PNG file as a ``data:`` URI, so an HTML page carries its images inside it."""
    payload = base64.b64encode(Path(path).read_bytes()).decode("ascii")
    return f"data:image/png;base64,{payload}"
