"""The app's own palette and style sheet.

Palette (our own choice): grades are told apart by lightness as well as hue, and every cell also carries its
grade as a digit, so nothing depends on colour alone. Hues avoid red/green pairs.
"""
from __future__ import annotations

INK = "#1d2733"
MUTED = "#5f6b78"
PAPER = "#ffffff"
PANEL = "#f4f6f9"
RULE = "#d5dbe3"
ACCENT = "#1f5f8b"  # deep blue: selection, bars
NORMAL = "#dcecf7"  # pale blue
IMPAIRED = "#f0b34a"  # amber
ABSENT = "#4b2a7b"  # deep violet
TARGET = "#0d8a8a"  # teal ring around the cell a next test points at
WARN_BG = "#fff1d6"
WARN_INK = "#6b3f00"
POOR_BG = "#4b2a7b"

GRADE_COLOURS = {2: NORMAL, 1: IMPAIRED, 0: ABSENT}

CSS = f"""
<style>
.cm-app {{ color: {INK}; font-family: system-ui, -apple-system, "Segoe UI", sans-serif; font-size: 13px;
  max-width: 1340px; }}
.cm-app .widget-label, .cm-app .widget-html-content {{ font-size: 13px; line-height: 1.3; }}
.cm-topbar {{ background: {INK}; color: {PAPER}; padding: 4px 8px; border-radius: 4px; align-items: center; }}
.cm-topbar .widget-html-content {{ color: {PAPER}; }}
.cm-title .widget-html-content {{ font-size: 17px; font-weight: 700; letter-spacing: 0.5px; }}
.cm-case .widget-html-content {{ color: #c9d6e3; font-style: italic; white-space: nowrap; overflow: hidden;
  text-overflow: ellipsis; }}
.cm-cautions {{ background: {WARN_BG}; color: {WARN_INK}; border-left: 5px solid {IMPAIRED}; padding: 3px 8px;
  margin: 4px 0; }}
.cm-cautions .widget-html-content {{ color: {WARN_INK}; font-size: 12px; line-height: 1.35; }}
.cm-error .widget-html-content {{ color: #7a1f00; font-weight: 600; }}
.cm-status .widget-html-content {{ color: #c9d6e3; font-size: 12px; white-space: nowrap; max-width: 260px;
  overflow: hidden; text-overflow: ellipsis; }}
.cm-col {{ background: {PANEL}; border: 1px solid {RULE}; border-radius: 4px; padding: 4px 6px; }}
.cm-heading .widget-html-content {{ font-weight: 700; font-size: 14px; color: {ACCENT}; }}
.cm-cell.widget-button, .cm-cell.jupyter-button {{ width: 19px; height: 20px; min-width: 19px; padding: 0;
  margin: 0 1px 0 0; font-size: 11px; line-height: 18px; border: 1px solid {RULE}; border-radius: 2px;
  background: {PAPER} !important; color: {MUTED}; box-shadow: none; }}
.cm-cell.cm-s2 {{ background: {NORMAL} !important; color: {INK}; }}
.cm-cell.cm-s1 {{ background: {IMPAIRED} !important; color: {INK}; font-weight: 700; }}
.cm-cell.cm-s0 {{ background: {ABSENT} !important; color: {PAPER}; font-weight: 700; }}
.cm-cell.cm-gap {{ margin-left: 6px; }}
.cm-target, .cm-cell.cm-target {{ outline: 3px solid {TARGET}; outline-offset: 1px; z-index: 2; }}
.cm-striplabel {{ width: 100px; min-width: 100px; font-size: 12px; color: {MUTED}; }}
.cm-striplabel .widget-html-content {{ font-size: 12px; color: {MUTED}; line-height: 20px; white-space: nowrap; }}
.cm-dermhead .widget-html-content {{ font-size: 9px; color: {MUTED}; line-height: 12px; }}
.cm-dermrow {{ display: flex; }}
.cm-dermrow .cm-dh {{ width: 20px; min-width: 20px; text-align: center; white-space: nowrap; letter-spacing: -0.3px; }}
.cm-dermrow .cm-dh-gap {{ margin-left: 6px; }}
.cm-dermrow .cm-dh-lead {{ width: 100px; min-width: 100px; }}
.cm-stripgroup {{ margin-bottom: 3px; }}
.cm-row {{ align-items: center; }}
.cm-hyp {{ border-bottom: 1px solid {RULE}; padding: 1px 0; align-items: center; }}
.cm-hyp.cm-selected {{ background: #e3edf6; box-shadow: inset 4px 0 0 {ACCENT}; }}
.cm-hyp .widget-button {{ width: 26px; min-width: 26px; height: 24px; padding: 0; margin: 1px 4px 1px 2px; }}
.cm-bar {{ display: inline-block; height: 7px; background: {ACCENT}; border-radius: 2px; vertical-align: middle; }}
.cm-bartrack {{ display: inline-block; width: 90px; height: 7px; background: {RULE}; border-radius: 2px;
  vertical-align: middle; margin-right: 6px; }}
.cm-hyptext .widget-html-content {{ line-height: 1.2; font-size: 12px; }}
.cm-hyptext b {{ color: {INK}; }}
.cm-why {{ color: {MUTED}; font-size: 12px; }}
.cm-lead .widget-html-content {{ font-size: 14px; }}
.cm-poor {{ background: {POOR_BG}; padding: 4px 8px; border-radius: 3px; }}
.cm-poor .widget-html-content {{ color: {PAPER}; font-weight: 600; }}
.cm-specific .widget-html-content {{ color: {WARN_INK}; font-size: 12px; }}
.cm-facts .widget-html-content {{ font-size: 12px; line-height: 1.35; }}
.cm-next.widget-button {{ width: 100%; text-align: left; height: auto; min-height: 24px; font-size: 12px;
  margin: 1px 0; padding: 3px 6px; line-height: 1.3; white-space: normal; overflow: visible; text-overflow: clip;
  background: {PAPER}; border: 1px solid {RULE}; }}
.cm-next.widget-button:hover {{ border-color: {TARGET}; }}
.cm-pic {{ border: 1px solid {RULE}; background: {PAPER}; }}
.cm-legend .widget-html-content {{ font-size: 11px; color: {MUTED}; }}
.cm-key {{ display: inline-block; width: 12px; height: 12px; border: 1px solid {RULE}; vertical-align: middle;
  margin: 0 3px 0 8px; font-size: 9px; text-align: center; line-height: 12px; }}
.cm-app.cm-busy, .cm-app.cm-busy .widget-button {{ cursor: progress; }}
.cm-app .widget-dropdown > select {{ font-size: 12px; }}
.cm-upload.widget-upload, .cm-upload.jupyter-button {{ font-size: 0; }}
.cm-upload.widget-upload::after, .cm-upload.jupyter-button::after {{ content: "Open findings…"; font-size: 13px; }}
.cm-exam {{ flex: 0 0 auto; margin-right: 6px; }}
.cm-nextbox {{ contain: inline-size; }}
.cm-hyps {{ flex: 1 1 auto; min-width: 0; }}
.cm-app .widget-tab > .p-TabBar .p-TabBar-tab, .cm-app .lm-TabBar-tab {{ font-size: 13px; min-width: 120px; }}
.cm-fill.widget-button {{ padding: 0 10px; }}
.cm-pic-caption .widget-html-content {{ line-height: 1.35; }}
</style>
"""
