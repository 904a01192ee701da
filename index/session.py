"""The session: the open vector set, its annoy index and the index's state, as one immutable value.

Every query runs against a session (``query.run(session)``). The console publishes a new session whenever the
index changes state and hands the session to its workers as an argument, so a worker never reads state that
changes under it; the command line builds one per command.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from wordkin.index.ann.annoy_file import AnnIndex, IndexLoad, IndexState, small_set
from wordkin.index.vectors import VectorSet


@dataclass(frozen=True)
class Session:
    """``vectors`` and, once ``state`` is READY, the ``index`` that proposes candidates for them."""

    vectors: VectorSet
    index: AnnIndex | None = None
    state: IndexState = IndexState.EMPTY
    #: Why the index was rejected or failed (empty otherwise).
    reason: str = ""
    #: The set the open one replaces, when comparing (``wordkin open NEW --against OLD``).
    against: VectorSet | None = None

    @classmethod
    def from_load(cls, vectors: VectorSet, loaded: IndexLoad, against: VectorSet | None = None) -> Session:
        return cls(vectors, loaded.index, loaded.state, loaded.reason, against)

    def ann(self, exact: bool = False) -> AnnIndex | None:
        """The index to ask for candidates, or None when queries are answered by an exact scan."""
        if exact or self.state is not IndexState.READY:
            return None
        return self.index

    def with_state(self, state: IndexState, index: AnnIndex | None = None, reason: str = "") -> Session:
        return dataclasses.replace(self, state=state, index=index, reason=reason)

    def answering(self) -> str:
        """How queries are answered now, in a few words (the console's status line, ``info``); ``reason`` says why
        an index was rejected or failed."""
        s = self.state
        if s is IndexState.READY and self.index is not None:
            if small_set(self.vectors.n, self.vectors.dims):
                return "exact search: small set"  # a full scan is as fast as the index below this size
            if not self.index.worthwhile:
                return "exact search: faster than the index here"
            if not self.index.usable:
                return f"exact search: index recall@10 {self.index.recall_at_10:.3f} too low"
            if self.index.warm is False:
                return "exact search: index not in memory yet"  # its file is being read in
            meta = self.vectors.meta.index
            if meta.recall_frequent and meta.recall_random:
                # Both samples: the words people type and words drawn at random (mostly rare ones).
                return f"index, recall@10 {meta.recall_frequent:.3f} / {meta.recall_random:.3f}"
            return f"index, recall@10 {self.index.recall_at_10:.3f}"
        if s is IndexState.BUILDING:
            return "exact search, index building"
        if s is IndexState.REJECTED:
            return "exact search: index rejected"
        if s is IndexState.FAILED:
            return "exact search: index build failed"
        if self.vectors.cache_dir is None:
            return "exact search: no cache"
        return "exact search: no index yet"
