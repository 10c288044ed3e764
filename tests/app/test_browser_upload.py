"""An upload too large for the page is refused in the browser, before it is sent.

The page's file field sends the file base64-encoded (RFC 4648 section 4: 4 characters per
3 bytes) in one websocket message, and the server accepts messages up to
`server.MAX_MESSAGE_BYTES` (32 MB): a 26 MB file (34.7 MB encoded) used to cut the page's
connection without a word. The check in the browser (`compare_panes.UPLOAD_GUARD_JS`)
refuses any file over the page's limit (`session_files.UPLOAD_LIMIT_BYTES`) with a
message and sends nothing; the page then still works (a small snapshot opens).
Driven in headless Chromium against the served app (fixtures of conftest.py).
"""

from __future__ import annotations

import pytest

from sub60.app.server import MAX_MESSAGE_BYTES
from sub60.app.session_files import UPLOAD_LIMIT_BYTES
from sub60.app.snapshot_schema import SnapshotSettings
from sub60.physics.design import Design
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 90_000
BIG_BYTES = 26 * 1024 * 1024


def test_a_26_mb_upload_is_refused_in_the_browser_and_the_page_keeps_working(browser, app_url,
                                                                             tmp_path):
    assert BIG_BYTES * 4 / 3 > MAX_MESSAGE_BYTES > BIG_BYTES > UPLOAD_LIMIT_BYTES
    big = tmp_path / "big.zip"
    with open(big, "wb") as fh:
        fh.truncate(BIG_BYTES)
    small = tmp_path / "settings.json"
    small.write_text(SnapshotSettings(design=Design(body_thickness_nm=9.0)).to_json())

    page, _, errors = open_app(browser, app_url)
    try:
        field = page.locator(".snapshot-upload input[type=file]")
        messages: list[str] = []

        def answer(dialog) -> None:  # an open alert blocks the page until it is answered
            messages.append(dialog.message)
            dialog.accept()

        page.once("dialog", answer)
        field.set_input_files(str(big))
        page.wait_for_timeout(0)  # let the dialog event reach the handler
        assert len(messages) == 1, messages
        message = messages[0]
        assert '"big.zip" is 26.0 MB' in message, message
        assert f"at most {UPLOAD_LIMIT_BYTES / 1024 / 1024:g} MB" in message
        assert "Nothing was sent" in message
        # the connection is alive: a small snapshot opens and the controls follow it
        field.set_input_files(str(small))
        page.wait_for_function(
            "() => sub60.byClass('snapshot-report').text.includes('read settings.json') "
            "&& sub60.sliderOf('ctl-body_thickness_nm').value === 9", timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()
