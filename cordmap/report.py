"""The case sheet to keep: plain text (to paste into a record), a PDF whose text can be selected, or a PNG.

One content model (`sheet_lines`: the sheet as titled lines, in words, never cut) feeds all three; the PDF and PNG
pages are laid out by `_paginate` and drawn with matplotlib (imported here only inside functions, like
`cordmap.plotting`), the PDF with its text as text (TrueType fonts embedded, pdf.fonttype 42). Every page carries
the caution at its top and foot; the text starts and ends with it.
"""
from __future__ import annotations

import io
import textwrap
from dataclasses import dataclass
from pathlib import Path

from . import cautions as C
from .errors import CordmapError
from .nexttests import beyond_the_bedside

FORMATS = ("pdf", "png", "txt")
PAGE = (8.27, 11.69)  # A4 portrait, inches
MARGIN = 0.55  # inches
TEXT_WIDTH = 100  # characters per line of plain text
PAGE_WIDTH = 112  # characters per line of body text at 8.5 pt on an A4 page (DejaVu Sans, measured by eye)
PICTURES = 3.1  # inches of page 1 the two pictures take
LINE = {"title": 0.30, "head": 0.27, "text": 0.165, "gap": 0.09, "pictures": PICTURES}  # inches per line
INK, MUTED, ACCENT, WARN_INK, WARN_BG = "#1d2733", "#5f6b78", "#1f5f8b", "#6b3f00", "#fff1d6"
PHASE_WORDS = {"chronic": "chronic (no spinal shock)", "acute": "acute (spinal shock possible)"}


@dataclass(frozen=True)
class Line:
    """One line of the sheet: `kind` is title, head (a section heading), text, item (a bullet), gap, or pictures
    (where a page draws the leading hypothesis' cross-section and body map; plain text skips it)."""

    kind: str
    text: str = ""
    indent: int = 0
    keep: int = 0  # lines with the same non-zero number stay on one page (a hypothesis' block), where they fit


def report_format(path) -> str:
    """The format an output file's suffix asks for: 'pdf', 'png' or 'txt' (a one-line error otherwise)."""
    suffix = Path(path).suffix.lower().lstrip(".")
    if suffix not in FORMATS:
        raise CordmapError(f"{Path(path).name}: the report format is chosen by the suffix; allowed .pdf, .png, .txt "
                           f"(got {'.' + suffix if suffix else 'no suffix'})")
    return suffix


def _entered_lines(findings) -> list[str]:
    """The abnormal entered findings in words (dermatomes grouped into ranges)."""
    from .items import item_label, verdict
    from .rank import _describe

    abnormal = [(k, v, v) for k, v in findings.items.items() if verdict(k, v) is True]
    nt = [k for k, v in findings.items.items() if verdict(k, v) is None]
    out = _describe(abnormal, conflicts=False)
    if nt:
        out.append("not testable: " + ", ".join(item_label(k) for k in nt))
    return out


def sheet_lines(findings, ranking, top: int = 5) -> list[Line]:
    """The case sheet as lines in words: the exam, the hypotheses with what they explain and conflict with, the
    next tests, the ISNCSCI classification, the cautions. Nothing is cut."""
    from .classify import classification_line, rows
    from .views import FIT_WORDS, field_words

    n = len(findings.items)
    lines = [Line("title", "cordmap case sheet"),
             Line("text", f"Exam: {findings.label or 'unlabelled'}"),
             Line("text", f"Phase: {PHASE_WORDS.get(findings.phase, findings.phase)}; {n} finding"
                          f"{'s' * (n != 1)} entered, {ranking.examined} used by the ranking"),
             *([Line("text", f"ISNCSCI: {classification_line(ranking.classification)}")]
               if ranking.classification is not None else []),
             Line("gap")]
    if ranking.hypotheses:
        lines.append(Line("pictures"))
    lines.append(Line("head", "Abnormal findings entered"))
    lines += [Line("item", t) for t in _entered_lines(findings)] or [Line("text", "none")]
    lines += [Line("gap"), Line("head", "Lesion hypotheses, most likely first"),
              Line("text", f"Verdict: {FIT_WORDS.get(ranking.fit, ranking.fit)}.")]
    if ranking.advice:
        lines.append(Line("text", ranking.advice))
    for h in ranking.hypotheses[:top]:
        levels = ", ".join(h.vertebral_levels) or "none (no lesion)"
        lines += [Line("gap"), Line("text", f"{h.rank}. {h.description}: probability {h.probability:.1%}; "
                                            f"vertebrae to image: {levels}", keep=h.rank),
                  Line("text", h.reason, 1, h.rank)]
        lines += [Line("text", f"{'also, ' if w.advice else 'why: '}{w.why}", 1, h.rank)
                  for w in getattr(h, "imaging", ())]
        if h.variants:
            lines.append(Line("text", "or, with the same bedside picture (imaging tells which): "
                                      + "; ".join(v.describe() for v in h.variants), 1, h.rank))
        if h.same_exam:
            lines.append(Line("text", f"the same predicted exam as: {h.same_exam_text()} (no bedside test "
                                      "separates them; imaging does)", 1, h.rank))
        lines.append(Line("text", "explains: " + ("; ".join(h.explains) or "no abnormal finding"), 1, h.rank))
        lines.append(Line("text", "conflicts: " + ("; ".join(h.conflicts) or "none"), 1, h.rank))
    if len(ranking.hypotheses) > top:
        lines.append(Line("text", f"({len(ranking.hypotheses) - top} less likely hypotheses not listed)"))
    if ranking.next_tests:
        lines += [Line("gap"), Line("head", "Worth examining next")]
        lines += [Line("item", t.why) for t in ranking.next_tests]
    elif ranking.fit in ("good", "poor"):
        lines += [Line("gap"), Line("head", "Worth examining next"),
                  Line("text", f"No bedside test left would change what is done: "
                               f"{beyond_the_bedside(ranking)}.")]
    c = ranking.classification
    lines += [Line("gap"), Line("head", "ISNCSCI classification of the entered exam (2019 rules)")]
    if c is None:
        lines.append(Line("text", "not available"))
    else:
        lines += [Line("text", f"{what}: {value}") for what, value in rows(c)]
        for field, why in c.reasons:
            lines.append(Line("text", f"not determinable, {field_words(field)}: {why}", 1))
        lines += [Line("text", f"note: {note}", 1) for note in c.notes]
    lines += [Line("gap"), Line("head", "Cautions")]
    lines += [Line("item", x) for x in ranking.cautions]
    return lines


def report_text(findings, ranking, top: int = 5) -> str:
    """The case sheet as plain text for pasting into a record (wrapped at 100 characters, nothing cut), the
    caution first and last."""
    banner = textwrap.wrap(C.BANNER, TEXT_WIDTH)
    out = [*banner, ""]
    for ln in sheet_lines(findings, ranking, top):
        if ln.kind == "pictures":
            continue
        if ln.kind == "gap":
            out.append("")
        elif ln.kind == "title":
            out += [ln.text.upper(), "=" * len(ln.text)]
        elif ln.kind == "head":
            out += [ln.text, "-" * len(ln.text)]
        else:
            first = "  " * ln.indent + ("* " if ln.kind == "item" else "")
            out += textwrap.wrap(ln.text, TEXT_WIDTH, initial_indent=first,
                                 subsequent_indent=" " * len(first) + ("  " if ln.kind == "text" and ln.indent
                                                                      else ""), break_long_words=False,
                                 break_on_hyphens=False)
    out += ["", *banner]
    return "\n".join(out) + "\n"


# ------------------------------------------------------------------ pages

def _wrapped(lines: list[Line]) -> list[tuple[str, str, int, int]]:
    """(kind, text, indent, keep) per printed line: body text wrapped to the page, nothing cut. A heading keeps
    with the line after it."""
    out = []
    for n, ln in enumerate(lines):
        keep = ln.keep or -(n + 1)  # a line of its own: a group of one (negative, never equal to a hypothesis')
        if ln.kind == "head":
            out.append((ln.kind, ln.text, 0, -(n + 2)))  # with the next line
            continue
        if ln.kind in ("title", "gap", "pictures"):
            out.append((ln.kind, ln.text, 0, keep))
            continue
        width = PAGE_WIDTH - 3 * ln.indent - 2
        for i, part in enumerate(textwrap.wrap(ln.text, width, break_long_words=False, break_on_hyphens=False)):
            bullet = "• " if ln.kind == "item" and i == 0 else "  " if ln.kind == "item" else ""
            out.append(("text", bullet + part, ln.indent + (1 if i and ln.kind == "text" else 0), keep))
    return out


def _paginate(printed) -> list[list]:
    """Rows onto pages; a group of rows (one `keep` number, in a run) moves whole to the next page when it does not
    fit and would fit on an empty one."""
    top_band, foot_band = 0.95, 0.75  # inches: the caution bands
    room = PAGE[1] - 2 * MARGIN - top_band - foot_band
    groups: list[list] = []
    for row in printed:
        if groups and groups[-1][-1][3] == row[3]:
            groups[-1].append(row)
        else:
            groups.append([row])
    pages, cur, used = [], [], 0.0
    for group in groups:
        gh = sum(LINE.get(r[0], LINE["text"]) for r in group)
        if cur and used + gh > room and gh <= room:
            pages.append(cur)
            cur, used = [], 0.0
        for row in group:
            h = LINE.get(row[0], LINE["text"])
            if used + h > room and cur:
                pages.append(cur)
                cur, used = [], 0.0
            if not cur and row[0] == "gap":
                continue
            cur.append(row)
            used += h
    pages.append(cur)
    return pages


def _caution_bands(fig, page_no: int, pages: int) -> None:
    from matplotlib.patches import Rectangle

    W, H = PAGE
    x0 = MARGIN / W
    band_top = 1 - MARGIN / H
    fig.patches.append(Rectangle((x0, band_top - 0.75 / H), 1 - 2 * x0, 0.75 / H, transform=fig.transFigure,
                                 facecolor=WARN_BG, edgecolor=WARN_INK, linewidth=1.0))
    fig.text(x0 + 0.1 / W, band_top - 0.1 / H, "CAUTION", fontsize=9, weight="bold", color=WARN_INK, va="top")
    fig.text(x0 + 0.1 / W, band_top - 0.27 / H, "\n".join(textwrap.wrap(C.BANNER, 118)), fontsize=7.5,
             color=WARN_INK, va="top", linespacing=1.25)
    foot = MARGIN / H
    fig.text(x0, foot + 0.5 / H, "\n".join(textwrap.wrap(" ".join(C.GENERAL), 130)), fontsize=6.8, color=WARN_INK,
             va="top", linespacing=1.2)
    fig.text(1 - x0, foot - 0.2 / H, f"cordmap case sheet, page {page_no} of {pages}", fontsize=6.5, color=MUTED,
             ha="right", va="bottom")


def _picture(fig, rect, png: bytes, title: str) -> None:
    import matplotlib.image as mpimg

    ax = fig.add_axes(rect)
    ax.imshow(mpimg.imread(io.BytesIO(png), format="png"))
    ax.set_axis_off()
    ax.set_title(title, fontsize=8.5, color=INK, loc="left")


def report_figures(findings, ranking, top: int = 5, selected: int = 0) -> list:
    """The sheet's pages as matplotlib Figures (A4 portrait): the caution bands on each, the leading hypothesis'
    cross-section and the pinprick body map on the first."""
    from matplotlib.figure import Figure

    from . import plotting

    printed = _wrapped(sheet_lines(findings, ranking, top))
    hyps = ranking.hypotheses
    pages = _paginate(printed)
    W, H = PAGE
    figs = []
    for p, rows_ in enumerate(pages, start=1):
        fig = Figure(figsize=PAGE, facecolor="white")
        _caution_bands(fig, p, len(pages))
        y = H - MARGIN - 0.95
        for kind, text, indent, _ in rows_:
            h_in = LINE.get(kind, LINE["text"])
            x = (MARGIN + 0.22 * indent) / W
            if kind == "pictures":
                h = hyps[min(selected, len(hyps) - 1)]
                pic_h, y0 = (PICTURES - 0.35) / H, (y - PICTURES + 0.1) / H
                _picture(fig, (MARGIN / W, y0, 0.43, pic_h), plotting.section_png(h.lesion.top, h.lesion,
                                                                                  size=(460, 420)),
                         f"Hypothesis {h.rank}: cross-section at {h.lesion.top}")
                _picture(fig, (0.52, y0, 0.43, pic_h), plotting.body_map_png(findings, h.predicted(), "pinprick",
                                                                             size=(560, 300),
                                                                             conflicts=h.conflict_items),
                         "Pinprick: entered and predicted")
            elif kind == "title":
                fig.text(x, (y - 0.05) / H, text, fontsize=15, weight="bold", color=ACCENT, va="top")
            elif kind == "head":
                fig.text(x, (y - 0.07) / H, text, fontsize=10.5, weight="bold", color=INK, va="top")
            elif kind == "text":
                fig.text(x, y / H, text, fontsize=8.5, color=INK, va="top")
            y -= h_in
        figs.append(fig)
    return figs


def report_pdf(findings, ranking, top: int = 5, selected: int = 0) -> bytes:
    """The case sheet as a PDF (A4 pages) whose text can be selected and copied."""
    import matplotlib
    from matplotlib.backends.backend_pdf import PdfPages

    buf = io.BytesIO()
    with matplotlib.rc_context({"pdf.fonttype": 42}):  # TrueType: text stays text, with its characters
        with PdfPages(buf, metadata={"Title": "cordmap case sheet", "Creator": "cordmap"}) as pdf:
            for fig in report_figures(findings, ranking, top, selected):
                pdf.savefig(fig)
    return buf.getvalue()


def report_png(findings, ranking, top: int = 5, selected: int = 0, dpi: int = 110) -> bytes:
    """The case sheet as one PNG: its pages one below the other (nothing cut)."""
    import matplotlib.image as mpimg
    import numpy as np

    images = []
    for fig in report_figures(findings, ranking, top, selected):
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=dpi, facecolor="white")
        images.append(mpimg.imread(io.BytesIO(buf.getvalue()), format="png"))
    sep = np.full((6, images[0].shape[1], images[0].shape[2]), 0.75, dtype=images[0].dtype)
    sep[..., 3:] = 1.0
    stacked = np.concatenate([x for im in images for x in (im, sep)][:-1], axis=0)
    out = io.BytesIO()
    mpimg.imsave(out, stacked, format="png")
    return out.getvalue()


def report_bytes(findings, fmt: str = "pdf", top: int = 5, ranking=None, selected: int = 0) -> bytes:
    """The case sheet of `findings` (anything `cordmap.findings.parse` reads) in `fmt` ('pdf', 'png' or 'txt');
    ranked here unless `ranking` is given."""
    from .findings import parse
    from .rank import rank

    if fmt not in FORMATS:
        from .errors import bad_value

        raise bad_value("format", fmt, FORMATS, "report format")
    f = parse(findings)
    r = ranking if ranking is not None else rank(f, top=max(top, 1))
    if fmt == "txt":
        return report_text(f, r, top).encode("utf-8")
    if fmt == "png":
        return report_png(f, r, top, selected)
    return report_pdf(f, r, top, selected)


def write_report(findings, path, top: int = 5, force: bool = False) -> Path:
    """Write the case sheet to `path` (format by its suffix: .pdf, .png, .txt); an existing file only with
    `force`. Returns the path written."""
    from .files import check_output, write_atomic

    fmt = report_format(path)
    out = check_output(path, force=force, inputs=[findings] if isinstance(findings, Path) else [])
    write_atomic(out, report_bytes(findings, fmt, top), force=force)
    return out
