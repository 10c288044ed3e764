"""A thread-safe least-recently-used cache bounded by the bytes of the arrays it holds.

Used for the solved bias points of a `Simulator` and for the bias-independent device
structures (`sub60.physics.structure.build_frame`). The size of an entry is given by
the caller (the ``nbytes`` of its numpy arrays; Python object overhead, a few hundred
bytes per entry, is not counted). Entries may share a large part (bias points of one
design share its device structure): ``shared_of`` names it and its size, and it is
counted once while any entry holding it is cached. An entry larger than the whole
budget is not kept.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable
from dataclasses import dataclass
from typing import Generic, TypeVar

import numpy as np

V = TypeVar("V")


def array_bytes(*arrays: object) -> int:
    """Total ``nbytes`` of the numpy arrays among ``arrays`` (other objects count 0) [B]."""
    return sum(int(a.nbytes) for a in arrays if isinstance(a, np.ndarray))


@dataclass(frozen=True)
class CacheInfo:
    """Occupancy of a `ByteLRU`: entries, bytes held and the budget [B], hits, misses."""

    entries: int
    nbytes: int
    max_bytes: int
    hits: int
    misses: int


class ByteLRU(Generic[V]):
    """Least-recently-used mapping whose entries' array bytes stay <= ``max_bytes``.

    Parameters
    ----------
    max_bytes : int
        budget for the sum of the entries' sizes [B]; 0 disables the cache.
    size_of : callable
        value -> its own size [B] (e.g. the ``nbytes`` of its arrays).
    shared_of : callable, optional
        value -> (key, size [B]) of a part shared between entries, counted once.
    """

    def __init__(self, max_bytes: int, size_of: Callable[[V], int],
                 shared_of: Callable[[V], tuple[Hashable, int]] | None = None):
        if not (isinstance(max_bytes, (int, np.integer)) and max_bytes >= 0):
            raise ValueError(f"max_bytes: expected an integer >= 0 [B], got {max_bytes!r}")
        self.max_bytes = int(max_bytes)
        self._size_of = size_of
        self._shared_of = shared_of
        self._shared: dict[Hashable, list[int]] = {}  # shared key -> [entries, bytes]
        self._data: OrderedDict[Hashable, tuple[V, int, Hashable]] = OrderedDict()
        self._nbytes = 0
        self._hits = 0
        self._misses = 0
        self._lock = threading.Lock()

    def get(self, key: Hashable) -> V | None:
        """The value of ``key`` (marked most recently used), or None."""
        with self._lock:
            item = self._data.get(key)
            if item is None:
                self._misses += 1
                return None
            self._data.move_to_end(key)
            self._hits += 1
            return item[0]

    def put(self, key: Hashable, value: V) -> None:
        """Store ``value``; evict least recently used entries until within the budget."""
        size = int(self._size_of(value))
        shared_key, shared_size = (None, 0) if self._shared_of is None else self._shared_of(value)
        with self._lock:
            self._drop(key)
            new_shared = shared_key is not None and shared_key not in self._shared
            if size + (shared_size if new_shared else 0) > self.max_bytes:
                return
            self._data[key] = (value, size, shared_key)
            self._nbytes += size
            if shared_key is not None:
                if new_shared:
                    self._shared[shared_key] = [0, int(shared_size)]
                    self._nbytes += int(shared_size)
                self._shared[shared_key][0] += 1
            while self._nbytes > self.max_bytes:
                self._drop(next(iter(self._data)))

    def _drop(self, key: Hashable) -> None:
        """Remove one entry and release its share (lock held by the caller)."""
        item = self._data.pop(key, None)
        if item is None:
            return
        _, size, shared_key = item
        self._nbytes -= size
        if shared_key is not None:
            share = self._shared[shared_key]
            share[0] -= 1
            if share[0] == 0:
                self._nbytes -= share[1]
                del self._shared[shared_key]

    def clear(self) -> None:
        """Drop every entry (the hit and miss counts are kept)."""
        with self._lock:
            self._data.clear()
            self._shared.clear()
            self._nbytes = 0

    @property
    def nbytes(self) -> int:
        """Bytes held now [B]."""
        return self._nbytes

    def __len__(self) -> int:
        return len(self._data)

    def info(self) -> CacheInfo:
        """Entries, bytes held, budget, hits and misses."""
        with self._lock:
            return CacheInfo(len(self._data), self._nbytes, self.max_bytes, self._hits,
                             self._misses)
