"""A report as a list of blocks, rendered to Markdown and to one self-contained HTML page.

Blocks are plain data (heading, paragraph, bullet list, table, figure,
preformatted text), so the same content renders to both formats; figures are
linked from the Markdown and embedded (base64 PNG) in the HTML.
"""

from __future__ import annotations

import base64
import html
from dataclasses import dataclass
from pathlib import Path


@dataclass(frozen=True)
class Heading:
    text: str
    level: int = 2


@dataclass(frozen=True)
class Paragraph:
    text: str


@dataclass(frozen=True)
class Bullets:
    items: tuple[str, ...]


@dataclass(frozen=True)
class Table:
    header: tuple[str, ...]
    rows: tuple[tuple, ...]
    caption: str = ""


@dataclass(frozen=True)
class Figure:
    png: Path  # path of the PNG, relative to the report's folder
    caption: str


@dataclass(frozen=True)
class Preformatted:
    text: str


def _cell(v) -> str:
    if isinstance(v, float):
        return f"{v:.4g}"
    return str(v)


def to_markdown(blocks) -> str:
    out: list[str] = []
    for b in blocks:
        if isinstance(b, Heading):
            out.append("#" * b.level + " " + b.text)
        elif isinstance(b, Paragraph):
            out.append(b.text)
        elif isinstance(b, Bullets):
            out.append("\n".join(f"- {i}" for i in b.items))
        elif isinstance(b, Table):
            lines = []
            if b.caption:
                lines.append(f"*{b.caption}*\n")
            lines.append("| " + " | ".join(b.header) + " |")
            lines.append("|" + "---|" * len(b.header))
            lines += ["| " + " | ".join(_cell(c) for c in row) + " |" for row in b.rows]
            out.append("\n".join(lines))
        elif isinstance(b, Figure):
            out.append(f"![{b.caption}]({b.png.as_posix()})\n\n*{b.caption}*")
        elif isinstance(b, Preformatted):
            out.append("```\n" + b.text.rstrip() + "\n```")
        else:  # pragma: no cover - programming error
            raise TypeError(f"unknown block {b!r}")
    return "\n\n".join(out) + "\n"


_CSS = """
body { font-family: system-ui, sans-serif; max-width: 70em; margin: 2em auto; padding: 0 1em; color: #222; }
table { border-collapse: collapse; margin: 0.5em 0 1.5em; font-size: 0.9em; }
th, td { border: 1px solid #bbb; padding: 0.25em 0.6em; text-align: right; }
th { background: #eee; }
td:first-child, th:first-child { text-align: left; }
figure { margin: 1em 0 2em; }
figure img { max-width: 100%; border: 1px solid #ddd; }
figcaption { font-style: italic; color: #555; }
pre { background: #f6f6f6; padding: 0.6em; overflow-x: auto; }
.caution { border-left: 4px solid #c60; padding: 0.3em 1em; background: #fff6ec; }
"""


def to_html(blocks, base_dir: Path, title: str) -> str:
    """One self-contained page; figure PNGs (relative to ``base_dir``) are embedded."""
    esc = html.escape
    out = [f"<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{esc(title)}</title>"
           f"<style>{_CSS}</style></head><body>"]
    for b in blocks:
        if isinstance(b, Heading):
            out.append(f"<h{b.level}>{esc(b.text)}</h{b.level}>")
        elif isinstance(b, Paragraph):
            cls = ' class="caution"' if b.text.lower().startswith("caution") else ""
            out.append(f"<p{cls}>{esc(b.text)}</p>")
        elif isinstance(b, Bullets):
            out.append("<ul>" + "".join(f"<li>{esc(i)}</li>" for i in b.items) + "</ul>")
        elif isinstance(b, Table):
            cap = f"<caption>{esc(b.caption)}</caption>" if b.caption else ""
            head = "".join(f"<th>{esc(h)}</th>" for h in b.header)
            rows = "".join("<tr>" + "".join(f"<td>{esc(_cell(c))}</td>" for c in row) + "</tr>"
                           for row in b.rows)
            out.append(f"<table>{cap}<thead><tr>{head}</tr></thead><tbody>{rows}</tbody></table>")
        elif isinstance(b, Figure):
            data = base64.b64encode((base_dir / b.png).read_bytes()).decode("ascii")
            out.append(f'<figure><img alt="{esc(b.caption)}" src="data:image/png;base64,{data}">'
                       f"<figcaption>{esc(b.caption)}</figcaption></figure>")
        elif isinstance(b, Preformatted):
            out.append(f"<pre>{esc(b.text)}</pre>")
        else:  # pragma: no cover
            raise TypeError(f"unknown block {b!r}")
    out.append("</body></html>")
    return "\n".join(out) + "\n"
