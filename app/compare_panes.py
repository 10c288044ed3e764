"""Widgets of the comparison table and of the snapshot controls (no logic of their own).

`ComparisonPanel` is the "Compare designs" section under the plots: a name field and a
"Pin this design" button, then one aligned row per design (the present one first) with
its key settings, its figures of merit and, for a pinned design, the difference from the
present one; each pinned row has its name (editable: rename), "Load" (into the controls)
and "Unpin". `SnapshotControls` is the sidebar card with the demo designs, the snapshot
download and the snapshot upload. Both call back into their views (`app.pin_view`,
`app.snapshot_view`), which own the actions.
"""

from __future__ import annotations

import html
from collections.abc import Callable, Sequence

import panel as pn
from bokeh.models import CustomJS

from sub60.app.pinning import (
    MAX_PINS,
    ComparisonRow,
    Pin,
    comparison_cells_html,
    comparison_header_html,
)
from sub60.app.session_files import UPLOAD_LIMIT_BYTES

#: Client-side size check of an upload, installed once per page when its document is
#: ready. The page's FileInput (Bokeh's) reads the chosen file with
#: ``FileReader.readAsDataURL`` and sends it base64-encoded (4/3 larger) in one websocket
#: message; a file over the websocket limit would silently cut the page's connection, and
#: Panel's FileInput offers no size limit. So a file over ``limit`` bytes is not read at
#: all: the read is left pending (nothing is sent) and the user is told in plain text.
UPLOAD_GUARD_JS = """
if (!window.sub60UploadGuard) {
  window.sub60UploadGuard = true;
  const read = FileReader.prototype.readAsDataURL;
  FileReader.prototype.readAsDataURL = function (blob) {
    if (blob instanceof Blob && blob.size > limit) {
      const mb = (blob.size / 1048576).toFixed(1);
      const name = (blob.name === undefined) ? "The file" : `The file "${blob.name}"`;
      window.alert(`${name} is ${mb} MB; a snapshot opened here is at most ${limit_mb} MB. ` +
                   "Nothing was sent.");
      return;  // never read: the widget's read stays pending and sends nothing
    }
    return read.call(this, blob);
  };
}
"""


def install_upload_guard(limit_bytes: int = UPLOAD_LIMIT_BYTES) -> None:
    """Refuse files over `limit_bytes` [bytes] in the browser, before they are sent
    (`UPLOAD_GUARD_JS`), on the current session's page; nothing outside a session."""
    doc = pn.state.curdoc
    if doc is None:
        return
    doc.js_on_event("document_ready", CustomJS(
        args={"limit": int(limit_bytes), "limit_mb": f"{limit_bytes / 1024 / 1024:g}"},
        code=UPLOAD_GUARD_JS))


#: Width of the name column and of the cells of a comparison row [px] (style.css sets
#: each cell's width; these add up to the same).
NAME_WIDTH = 168
CELLS_WIDTH = 920
BUTTON_WIDTH = 64
#: The download button in the colour of the page's primary buttons (FileDownload does not
#: pass its own colour setting on in this Panel version).
_PRIMARY_BUTTON = (
    ".bk-btn { background-color: #0072b5 !important; border-color: #0072b5 !important; "
    "color: #fff !important; } .bk-btn:hover { background-color: #005c92 !important; } "
    ".bk-btn a { color: #fff !important; } "
    ".bk-btn[disabled] { background-color: #9bb8cc !important; border-color: #9bb8cc !important; }")


class _PinRow:
    """The widgets of one pinned design's row."""

    def __init__(self, pin: Pin, css: list[str], on_rename: Callable[[int, str], None],
                 on_load: Callable[[int], None], on_unpin: Callable[[int], None]) -> None:
        slot = pin.slot
        self.swatch = pn.pane.HTML(self._swatch(pin), width=14, margin=(12, 0, 0, 4),
                                   stylesheets=css)
        self.name = pn.widgets.TextInput(value=pin.name, width=NAME_WIDTH - 22, margin=(4, 4),
                                         css_classes=["pin-name", f"pin-name-{slot}"])
        self.name.param.watch(lambda e: on_rename(slot, e.new), "value")
        self.cells = pn.pane.HTML("", width=CELLS_WIDTH, margin=(2, 0), stylesheets=css,
                                  css_classes=["pin-cells", f"pin-cells-{slot}"])
        self.load = pn.widgets.Button(label="Load", description="Load this design and its "
                                      "sweep into the controls", width=BUTTON_WIDTH,
                                      margin=(4, 2), css_classes=[f"pin-load-{slot}"])
        self.load.on_click(lambda _e: on_load(slot))
        self.unpin = pn.widgets.Button(label="Unpin", width=BUTTON_WIDTH, margin=(4, 2),
                                       variant="outline",
                                       css_classes=[f"pin-unpin-{slot}"])
        self.unpin.on_click(lambda _e: on_unpin(slot))
        self.row = pn.Row(self.swatch, self.name, self.cells, self.load, self.unpin,
                          margin=0, css_classes=["cmp-pin-row"])

    @staticmethod
    def _swatch(pin: Pin) -> str:
        return (f'<span class="swatch" style="background:{pin.colour}" '
                f'title="{html.escape(pin.name, quote=True)}"></span>')


class ComparisonPanel:
    """The "Compare designs" section: pin action, then the comparison rows."""

    def __init__(self, css: list[str], on_pin: Callable[[str], None],
                 on_rename: Callable[[int, str], None], on_load: Callable[[int], None],
                 on_unpin: Callable[[int], None]) -> None:
        self._css = css
        self._callbacks = (on_rename, on_load, on_unpin)
        self.title = pn.pane.HTML('<div class="section-title">Compare designs</div>',
                                  stylesheets=css, margin=(8, 4, 0, 8))
        self.name = pn.widgets.TextInput(placeholder="Design A", width=170, margin=(6, 4),
                                         css_classes=["pin-new-name"])
        self.button = pn.widgets.Button(label="Pin this design", color="primary",
                                        width=140, margin=(6, 4), css_classes=["pin-button"])
        self.button.on_click(lambda _e: on_pin(self.name.value_input or self.name.value))
        self.hint = pn.pane.HTML(self._hint(0), stylesheets=css, margin=(4, 8), width=470,
                                 css_classes=["pin-hint"])
        self.message = pn.pane.HTML("", stylesheets=css, margin=(4, 8), width=300,
                                    css_classes=["pin-message"])
        self.header = pn.Row(
            pn.pane.HTML('<div class="cmp-name-head">Design</div>', width=NAME_WIDTH,
                         stylesheets=css, margin=(0, 0)),
            pn.pane.HTML(comparison_header_html(), width=CELLS_WIDTH, stylesheets=css,
                         margin=0), margin=(4, 0, 0, 0), visible=False)
        self.present_cells = pn.pane.HTML("", width=CELLS_WIDTH, stylesheets=css, margin=(2, 0),
                                          css_classes=["present-cells"])
        self.present = pn.Row(
            pn.pane.HTML('<div class="cmp-name present">Present design</div>', width=NAME_WIDTH,
                         stylesheets=css, margin=(0, 0)),
            self.present_cells, margin=0, visible=False)
        self.rows: dict[int, _PinRow] = {}
        self.rows_column = pn.Column(margin=0)
        self.view = pn.Column(
            pn.Row(self.title, self.name, self.button, self.hint, self.message, margin=0),
            self.header, self.present, self.rows_column,
            sizing_mode="stretch_width", margin=(6, 4, 12, 4), css_classes=["compare"])

    @staticmethod
    def _hint(n: int) -> str:
        if n == 0:
            return ('<div class="note">Pin the present design to keep its band edges '
                    "(dashed, at the present bias) and its transfer curve on the plots "
                    f"while you change the controls; up to {MAX_PINS}.</div>")
        return (f'<div class="note">{n} of {MAX_PINS} pinned. Under each value: pinned '
                "minus present (green = better, red = worse). Click a legend entry to "
                "hide a curve.</div>")

    def set_pins(self, pins: Sequence[Pin], default_name: str, full: bool) -> None:
        """Rows for exactly these pins (widgets of kept pins stay, with their names)."""
        keep = {p.slot for p in pins}
        for slot in list(self.rows):
            if slot not in keep:
                del self.rows[slot]
        for p in pins:
            row = self.rows.get(p.slot)
            if row is None:
                self.rows[p.slot] = _PinRow(p, self._css, *self._callbacks)
            else:
                if row.name.value != p.name:
                    row.name.value = p.name
                row.swatch.object = _PinRow._swatch(p)
        self.rows_column.objects = [self.rows[p.slot].row for p in pins]
        self.header.visible = self.present.visible = bool(pins)
        self.hint.object = self._hint(len(pins))
        self.name.placeholder = default_name
        self.button.disabled = full

    def show_rows(self, rows: Sequence[ComparisonRow]) -> None:
        """Fill the cells of the present row and of each pinned row."""
        for r in rows:
            text = comparison_cells_html(r)
            if r.key == "present":
                self.present_cells.object = text
            else:
                row = self.rows.get(int(r.key.split("-")[1]))
                if row is not None:
                    row.cells.object = text

    def say(self, text: str, kind: str = "problem") -> None:
        """A short message beside the pin button ('' clears it)."""
        self.message.object = (f'<div class="pin-message {kind}">{html.escape(text)}</div>'
                               if text else "")


#: Browser side of the "Copy link" button: the page's address (kept equal to the
#: present settings by the page, `app.sharing.updated_search`) to the clipboard, by the
#: Clipboard API where the page is a secure context (https, 127.0.0.1) and by a selected
#: text box otherwise; the note under the button says what happened.
COPY_LINK_JS = """
const url = window.location.href;
const say = (text, cls) => { note.text = '<div class="note ' + cls + '">' + text + '</div>'; };
const fallback = () => {
  const t = document.createElement('textarea');
  t.value = url; t.setAttribute('readonly', ''); t.style.position = 'fixed';
  t.style.opacity = '0'; document.body.appendChild(t); t.select();
  let ok = false;
  try { ok = document.execCommand('copy'); } catch (e) { ok = false; }
  document.body.removeChild(t);
  if (ok) { say('Link copied. ' + LEFT_OUT, 'copy-done'); }
  else { say('Copying is blocked here: copy the address bar instead. ' + LEFT_OUT, 'copy-failed'); }
};
window.sub60CopiedLink = url;
if (navigator.clipboard && window.isSecureContext) {
  navigator.clipboard.writeText(url).then(() => say('Link copied. ' + LEFT_OUT, 'copy-done'),
                                          fallback);
} else { fallback(); }
"""
#: What the link leaves out (said under the button before and after a copy).
LINK_LEAVES_OUT = ("The link holds the design, bias, sweep and Ion/Ioff settings; pinned "
                   "designs are not in it (a snapshot keeps them).")


class SnapshotControls:
    """The sidebar card: demo designs, the copy-link button, snapshot download and
    snapshot upload."""

    def __init__(self, css: list[str], width: int, presets: dict[str, str],
                 download_callback: Callable) -> None:
        options = {"Choose a demo design…": ""}
        options.update({label: name for name, label in presets.items()})
        self.presets = pn.widgets.Select(label="Load a demo design", options=options, value="",
                                         width=width, margin=(4, 10), css_classes=["ctl-preset"])
        self.copy_link = pn.widgets.Button(label="Copy link to this design", width=width,
                                           margin=(8, 10, 2, 10),
                                           css_classes=["copy-link"])
        self.link_note = pn.pane.HTML(f'<div class="note">{LINK_LEAVES_OUT}</div>',
                                      stylesheets=css, margin=(0, 12), css_classes=["link-note"])
        self.copy_link.js_on_click(
            args={"note": self.link_note},
            code=COPY_LINK_JS.replace("LEFT_OUT", repr(LINK_LEAVES_OUT)))
        self.download = pn.widgets.FileDownload(
            callback=download_callback, filename="sub60-snapshot.zip",
            label="Download snapshot (.zip)", width=width, margin=(8, 10, 2, 10),
            css_classes=["snapshot-download"], stylesheets=[_PRIMARY_BUTTON])
        self.export_note = pn.pane.HTML(
            '<div class="note">Settings, pinned designs, curves (CSV), figures and an offline '
            "page; every curve is recomputed from scratch (a few seconds).</div>",
            stylesheets=css, margin=(0, 12), css_classes=["export-note"])
        limit_mb = UPLOAD_LIMIT_BYTES / 1024 / 1024
        self.upload_label = pn.pane.HTML(
            f'<div class="ctl-label">Open a snapshot (.zip or settings.json, at most '
            f"{limit_mb:g} MB)</div>", stylesheets=css, margin=(8, 10, 0, 10))
        self.upload = pn.widgets.FileInput(accept=".zip,.json", multiple=False, width=width,
                                           margin=(2, 10), css_classes=["snapshot-upload"])
        install_upload_guard()
        self.report = pn.pane.HTML("", stylesheets=css, margin=(2, 12, 6, 12), visible=False,
                                   css_classes=["snapshot-report"])
        self.items = (self.presets, self.copy_link, self.link_note, self.download,
                      self.export_note, self.upload_label,
                      self.upload, self.report)

    def show_report(self, kind: str, heading: str, lines: Sequence[str] = (),
                    max_lines: int = 10) -> None:
        """The outcome of an import or a demo design ('ok', 'warn', 'busy', 'info')."""
        shown = list(lines[:max_lines])
        if len(lines) > max_lines:
            shown.append(f"… and {len(lines) - max_lines} more")
        items = "".join(f"<li>{html.escape(line)}</li>" for line in shown)
        body = f"<ul>{items}</ul>" if items else ""
        self.report.object = (f'<div class="report {kind}"><div class="head">{heading}</div>'
                              f"{body}</div>")
        self.report.visible = True
