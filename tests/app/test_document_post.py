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
