"""Snapshots and demo designs on the explorer page: download, upload, demo list, report.

`SnapshotView` answers the widgets of the sidebar's first card
(`app.compare_panes.SnapshotControls`): a download exports a snapshot on the session's io
worker with a note meanwhile; an upload or a demo design is read and checked by
`app.session_files` and then applied to the whole page in one update (the page's
``apply`` callback); an opened file's stored figures of merit are recomputed on the io
worker and the report says whether they match. A file that cannot be used changes
nothing and says why in the page's error area.
"""

from __future__ import annotations

import asyncio
import datetime as _dt
import io
from collections.abc import Callable, Sequence

from sub60.app.compare_panes import SnapshotControls
from sub60.app.controls import WIDGET_WIDTH
from sub60.app.jobs import SessionJobs
from sub60.app.messages import MessageBoard, html_escape, short_error
from sub60.app.pinning import PinBoard
from sub60.app.session_files import (
    FileRefused,
    OpenedSnapshot,
    export_session,
    open_preset,
    open_snapshot,
    preset_labels,
    snapshot_of_session,
)
from sub60.app.snapshot_check import verify_snapshot
from sub60.app.snapshot_schema import SnapshotSettings
from sub60.physics import SolverError


class SnapshotView:
    """The snapshot card of one session.

    Parameters
    ----------
    jobs : the session's jobs (io worker, simulator, settings).
    board : the session's pinned designs.
    messages : the page's error messages.
    css : stylesheets of the page's HTML panes.
    post : runs an action on the document's event loop.
    apply : puts a snapshot's settings and its parameter values into the page.
    measured : returns the measured-curve card's file and fit for an export
        (`app.snapshot_measured.MeasuredSnapshot`, None: no file open).
    """

    def __init__(self, jobs: SessionJobs, board: PinBoard, messages: MessageBoard, css: Sequence[str],
                 post: Callable[..., None],
                 apply: Callable[[SnapshotSettings, dict], None],
                 measured: Callable[[], object] | None = None) -> None:
        self.jobs = jobs
        self._measured = measured
        self.board = board
        self.messages = messages
        self._post = post
        self._apply = apply
        self._demo_note = False  # the report shows a demo design's note
        self._report_token = 0  # a report for an older file or demo design is dropped
        self.controls = SnapshotControls(list(css), WIDGET_WIDTH, preset_labels(),
                                         self._download)
        self.controls.presets.param.watch(self._on_preset, "value")
        self.controls.upload.param.watch(self._on_upload, "value")

    def enable(self, design_valid: bool) -> None:
        """Export needs a valid design."""
        self.controls.download.disabled = not design_valid

    def forget_demo(self) -> None:
        """The page was changed by hand: it no longer shows the chosen demo design (the
        selector is cleared and the demo's note goes)."""
        if self.controls.presets.value:
            self.controls.presets.value = ""
        if self._demo_note:
            self._demo_note = False
            self.controls.report.object = ""
            self.controls.report.visible = False

    # ------------------------------------------------------------------ export
    def export_bytes(self, created: _dt.datetime | None = None) -> tuple[str, bytes]:
        """(file name, zip bytes) of a snapshot of the page, recomputed from scratch."""
        measured = self._measured() if self._measured is not None else None
        settings = snapshot_of_session(self.jobs.state, self.board, self.jobs.simulator,
                                       measured)
        return export_session(settings, created)

    async def _download(self) -> io.BytesIO:
        """FileDownload callback: export on the io worker, with a note meanwhile."""
        ctl = self.controls
        idle_note = ctl.export_note.object
        ctl.export_note.object = ('<div class="note busy">Preparing the snapshot: every curve '
                                  "is recomputed from scratch, a few seconds…</div>")
        ctl.download.loading = True
        try:
            pool = self.jobs.executor("io")
            if pool is not None:
                name, data = await asyncio.get_running_loop().run_in_executor(
                    pool, self.export_bytes)
            else:
                name, data = self.export_bytes()
        except (ValueError, SolverError) as exc:
            ctl.export_note.object = idle_note
            self.messages.set("snapshot", f"**Snapshot not written**: {html_escape(str(exc))}")
            raise
        finally:
            ctl.download.loading = False
        self.messages.clear("snapshot")
        ctl.download.filename = name
        ctl.export_note.object = (f'<div class="note done">Saved {name} '
                                  f"({len(data) / 1024:.0f} kB).</div>")
        return io.BytesIO(data)

    # ------------------------------------------------------------------ import
    def _on_upload(self, event) -> None:
        if event.new:
            self._post(self._open_upload, event.new, self.controls.upload.filename or "the file")

    def _open_upload(self, data: bytes, name: str) -> None:
        try:
            self.import_bytes(data, name)
        finally:
            self.controls.upload.clear()  # the same file can be chosen again

    def import_bytes(self, data: bytes, filename: str = "the file") -> bool:
        """Open a snapshot (zip or settings.json): restore every control, the pinned
        designs and the plots, then recompute its figures of merit in the background and
        report whether they equal the stored ones. A file that cannot be used leaves
        everything as it was, with the reason in the page's error area."""
        try:
            opened = open_snapshot(data, filename)
        except FileRefused as exc:
            self.messages.set("snapshot", str(exc))
            return False
        settings, report = opened.settings, opened.report
        self._demo_note = False  # the report becomes the file's
        self._take(opened)
        label = html_escape(filename)
        heading = f"Opened {label}" + (f": {html_escape(settings.title)}" if settings.title
                                       else "")
        n = len(settings.pinned)
        notes = [f"every control restored, {n} pinned design{'s' if n != 1 else ''}",
                 *opened.notes]
        if settings.measured is not None:
            m = settings.measured
            notes.append(f"measured curves of {html_escape(m.name)} restored"
                         + (" with their fit" if m.fit is not None else ""))
        self.controls.show_report("busy" if report.has_stored else "info", heading,
                                  [*report.lines(), *notes])
        if report.has_stored:
            self.jobs.submit("io", self._verify_job, self._report_token, settings, report,
                             notes, heading)
        return True

    def _take(self, opened: OpenedSnapshot) -> None:
        self.messages.clear("snapshot")
        self._apply(opened.settings, opened.updates)
        self._report_token += 1

    def _verify_job(self, token: int, settings: SnapshotSettings, report, notes: list[str],
                    heading: str) -> None:
        try:
            report.differences = verify_snapshot(settings)
            report.verified = True
            error = None
        except (ValueError, SolverError) as exc:
            error = f"the recomputation failed: {short_error(exc)}"
        self._post(self._show_verified, token, report, notes, heading, error)

    def _show_verified(self, token: int, report, notes: list[str], heading: str,
                       error: str | None) -> None:
        if token != self._report_token:
            return  # another file or demo design was opened since
        lines = [*report.lines(), *([error] if error else []), *notes]
        good = error is None and report.metrics_match and report.version_matches
        self.controls.show_report("ok" if good else "warn", heading, lines)

    # ------------------------------------------------------------------ demo designs
    def _on_preset(self, event) -> None:
        if event.new:
            self._post(self.load_preset, event.new)

    def load_preset(self, name: str) -> bool:
        """Put a demo design (assets/presets) into the controls, with its pinned designs."""
        try:
            opened = open_preset(name)
        except FileRefused as exc:
            self.messages.set("snapshot", str(exc))
            return False
        self._take(opened)
        settings = opened.settings
        self.controls.show_report("info",
                                  f"Demo design: {html_escape(settings.title or name)}",
                                  ([settings.note] if settings.note else []) + opened.notes)
        self._demo_note = True
        return True
