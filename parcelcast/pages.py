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
from pathlib import Path

DIALECTS = {"html": "_html.j2", "markdown": "_markdown.j2"}


@functools.lru_cache(maxsize=1)
def _environment():
    import jinja2

    env = jinja2.Environment(loader=jinja2.PackageLoader("parcelcast", "templates"),
                             autoescape=False, undefined=jinja2.StrictUndefined,
                             trim_blocks=False, lstrip_blocks=True, keep_trailing_newline=True)
    env.filters["cell"] = lambda value: str(value).replace("|", "\\|").replace("\n", " ")
    return env


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
