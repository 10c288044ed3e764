"""Results posted from worker threads all reach a served document while its event loop
keeps holding and releasing the document (as every page update does).

Bokeh's ``Document.add_next_tick_callback`` records a document event; under a hold that
event goes into the hold's list, which ``unhold`` copies and then empties. Called from a
worker thread during that window, the event was lost or left until the next hold, and
the page never ran that update (seen as a page whose output plot kept its "updating…"
title when every result came from the cache at once). `DocumentPost` leaves the
scheduling to the event loop's thread. Stated invariant of the app (every posted update
runs once, in the order posted), checked against Bokeh's own document and Tornado's
event loop; no source.
"""

from __future__ import annotations

import sys
import threading

from bokeh.document import Document
from bokeh.models import Div
from tornado.ioloop import IOLoop

from sub60.app.layout import DocumentPost

POSTS = 3000


class _Scheduled:
    """What the server's session does with a document's SessionCallbackAdded events:
    here, record their callbacks in order."""

    def __init__(self) -> None:
        self.callbacks: list = []

    def _session_callback_added(self, event) -> None:
        self.callbacks.append(event.callback)


def test_posts_from_a_worker_all_reach_a_held_document():
    doc = Document()
    texts = [Div(text="") for _ in range(50)]  # an update changes many models
    for div in texts:
        doc.add_root(div)
    scheduled = _Scheduled()
    doc.callbacks.on_change_dispatch_to(scheduled)
    ready, done = threading.Event(), threading.Event()
    box: dict = {}

    def loop_thread() -> None:
        loop = IOLoop(make_current=False)

        def start() -> None:
            box["post"] = DocumentPost(doc, loop)
            ready.set()
            churn()

        def churn() -> None:  # page updates: hold, change, release, again and again
            box["n"] = box.get("n", 0) + 1
            doc.hold("combine")
            for div in texts:
                div.text = str(box["n"])
            doc.unhold()
            if not done.is_set():
                loop.add_callback(churn)
            else:
                loop.stop()

        loop.add_callback(start)
        loop.start()
        loop.close()

    old = sys.getswitchinterval()
    sys.setswitchinterval(1e-6)  # switch threads often: the window is a few bytecodes
    try:
        t = threading.Thread(target=loop_thread, daemon=True)
        t.start()
        assert ready.wait(30)
        post = box["post"]
        order: list[int] = []
        for k in range(POSTS):  # from this (worker) thread
            post(order.append, k)
        post(order.append, POSTS)
        # the loop keeps churning until every post is scheduled (or a generous guard
        # against a hang passes: a lost post never arrives)
        for _ in range(600):
            if len(scheduled.callbacks) > POSTS:
                break
            done.wait(0.1)
        done.set()
        t.join(30)
    finally:
        sys.setswitchinterval(old)
    assert doc.callbacks._held_events == []
    assert len(scheduled.callbacks) == POSTS + 1
    # each update runs once, in the order posted
    for cb in scheduled.callbacks:
        cb.callback()
    assert order == list(range(POSTS + 1))


def test_a_message_left_in_panels_write_queue_is_sent():
    """Panel queues a page's messages while its websocket is busy and a write task sends
    them. Made to happen here in Panel's own functions, on a socket type of ours: the
    first task sends message 1 and awaits its write; message 2 is queued (with a task of
    its own) just as that write completes; the first task then ends, clearing the
    write flag, and message 2's task finds the flag cleared and returns without sending.
    `resend_stranded_writes` (run by `DocumentPost` after each update) sends it.
    Stated invariant of the app (every update reaches the page); no source."""
    import asyncio
    from types import SimpleNamespace

    from panel.io import document as panel_document

    from sub60.app.layout import resend_stranded_writes

    class Socket:  # a connection's socket of a type Panel dispatches through a handler
        pass

    sent: list[str] = []
    writes: list[asyncio.Future] = []

    def handler(conn, events=None, msg=None):
        sent.append(msg)
        writes.append(asyncio.get_running_loop().create_future())
        return [writes[-1]]

    panel_document.extra_socket_handlers[Socket] = handler
    class Connection:  # a session's connection: its socket and message factory
        _socket = Socket()
        protocol = SimpleNamespace(create=lambda kind, events: events[0])

    conn = Connection()
    doc = Document()

    async def scenario() -> tuple[list[str], list[str]]:
        panel_document.schedule_write_events(doc, [conn], ["message 1"])
        for _ in range(3):
            await asyncio.sleep(0)  # the first task sends message 1 and awaits its write
        writes[0].set_result(None)  # the write completes ...
        panel_document.schedule_write_events(doc, [conn], ["message 2"])  # ... as 2 comes
        await asyncio.sleep(0.05)
        before = list(sent)
        resend_stranded_writes(doc)
        await asyncio.sleep(0.05)
        for w in writes:
            if not w.done():
                w.set_result(None)
        await asyncio.sleep(0.05)
        return before, list(sent)

    result: dict = {}

    def run() -> None:  # an event loop of its own: another may run in this thread
        result["sent"] = asyncio.run(scenario())

    try:
        worker = threading.Thread(target=run, daemon=True)
        worker.start()
        worker.join(30)
        before, after = result["sent"]
    finally:
        panel_document.extra_socket_handlers.pop(Socket, None)
        for registry in (panel_document._WRITE_MSGS, panel_document._WRITE_BLOCK,
                         panel_document._WRITE_FUTURES):
            registry.pop(doc, None)
    assert before == ["message 1"]  # Panel alone: message 2 left in the queue
    assert after == ["message 1", "message 2"]
    assert doc not in panel_document._WRITE_MSGS and doc not in panel_document._WRITE_BLOCK
