"""The record as evidence: walk the chain of fingerprints over every stored reading and review.

Each entry's fingerprint is recomputed from its stored content and the fingerprint stored on the entry
before it (``slipwise.fingerprint``), so a value changed in the database shows at the entry that holds
it; a deleted entry shows as a gap in the chain positions, or as a head that no longer matches.
"""

from __future__ import annotations

import heapq
from dataclasses import dataclass

from slipwise import fingerprint as chain
from slipwise.store import readings as store
from slipwise.store.database import Database


@dataclass(frozen=True)
class ChainBreak:
    """Where the chain first fails: the entry, and why."""

    kind: str                 # "reading" or "review"
    id: int | None            # the row's id (None when an entry is missing altogether)
    reading_id: int | None    # the reading itself, or the reading a review judged
    position: int | None
    reason: str

    def describe(self) -> str:
        if self.kind == "reading":
            return f"reading {self.id}: {self.reason}"
        if self.kind == "review":
            return f"review {self.id} of reading {self.reading_id}: {self.reason}"
        return self.reason


@dataclass(frozen=True)
class ChainReport:
    readings: int
    reviews: int
    head: str | None
    broken: ChainBreak | None

    @property
    def intact(self) -> bool:
        return self.broken is None


def _entries(conn):
    readings = (((r["chain_position"] is not None, r["chain_position"] or 0, 0, r["id"]), "reading", r)
                for r in store.iter_chain_readings(conn))
    reviews = (((r["chain_position"] is not None, r["chain_position"] or 0, 1, r["id"]), "review", r)
               for r in store.chain_reviews(conn))
    return heapq.merge(readings, reviews, key=lambda e: e[0])


def verify_record(db: Database) -> ChainReport:
    """Walk the whole chain in one read transaction; the first break, if any, with counts."""
    counts = {"reading": 0, "review": 0}
    previous: str | None = None
    expected = 1
    with db.read() as conn:
        stored_head = store.chain_head(conn)
        for _, kind, row in _entries(conn):
            counts[kind] += 1
            reading_id = row["id"] if kind == "reading" else row["reading_id"]

            def broken(reason: str, position=row["chain_position"]) -> ChainReport:
                return ChainReport(counts["reading"], counts["review"], previous,
                                   ChainBreak(kind, row["id"], reading_id, position, reason))

            if row["chain_position"] is None or row["fingerprint"] is None:
                return broken("it has no fingerprint: it was written into the database outside slipwise")
            if row["chain_position"] != expected:
                missing = (f"entry {expected}" if row["chain_position"] == expected + 1
                           else f"entries {expected} to {row['chain_position'] - 1}")
                return ChainReport(counts["reading"], counts["review"], previous, ChainBreak(
                    "gap", None, None, expected,
                    f"chain {missing} missing before {kind} {row['id']}: a stored entry was deleted, or "
                    "two entries share a position"))
            content = chain.reading_content(row) if kind == "reading" else chain.review_content(row)
            if chain.fingerprint(content, previous) != row["fingerprint"]:
                return broken("its stored content no longer matches its fingerprint (changed after it was "
                              "stored), or the entry before it was altered")
            previous = row["fingerprint"]
            expected += 1
    length = expected - 1
    if stored_head is None:
        return ChainReport(counts["reading"], counts["review"], previous, ChainBreak(
            "head", None, None, None, "the chain head (table record_chain) is missing"))
    if stored_head != (length, previous):
        return ChainReport(counts["reading"], counts["review"], previous, ChainBreak(
            "head", None, None, stored_head[0],
            f"the chain head records {stored_head[0]} entries ending in {str(stored_head[1])[:16]}…, "
            f"the tables hold {length} ending in {str(previous)[:16]}…: entries at the end were deleted "
            "or the head was altered"))
    return ChainReport(counts["reading"], counts["review"], previous, None)
