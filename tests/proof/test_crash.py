"""Crash while writing: ``slipwise serve`` killed with SIGKILL in the middle of a stream of submissions.

Several client threads submit readings, each with a fresh client_id, and retry the same body (same
client_id) until the server acknowledges it (201 stored, or 200 for a replay of what it already stored),
as the page's outbox does. The server's whole process group is killed twice while they send, and
restarted on the same port. Afterwards every acknowledged reading is stored exactly once, with the id
and result it was acknowledged with, nothing is stored that was not acknowledged, and every stored
reading is whole (its result, its flags, its audit entry; no orphan rows). On SQLite and PostgreSQL.
"""

from __future__ import annotations

import json
import threading
import time

import pytest

from .fault_kit import (MOTOR, Backend, Http, Server, accounts, assert_nothing_half_written, reading_body)

CLIENTS = 8
ACKS_BETWEEN_KILLS = 40


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def backend(request, tmp_path):
    b = Backend(request.param, tmp_path)
    yield b
    b.drop()


class Sender(threading.Thread):
    """One tablet: submit, retry the same body until acknowledged, then the next reading."""

    def __init__(self, base: str, token: str, motor_id: int, number: int, acks: list, lock, stop: threading.Event):
        super().__init__(daemon=True)
        self.http = Http(base, token, timeout=20)
        self.motor_id, self.number = motor_id, number
        self.acks, self.lock, self.stop = acks, lock, stop
        self.unanswered = 0    # attempts with no answer (connection refused or cut)
        self.server_errors = 0  # 5xx answers
        self.refused: list = []  # any 4xx: would be a bug here

    def run(self) -> None:
        n = 0
        while not self.stop.is_set():
            n += 1
            body = reading_body(self.motor_id, self.number * 10_000 + n)
            attempts = 0
            while True:  # until acknowledged, whatever happens to the server
                attempts += 1
                status, _, answer = self.http.call("POST", "/api/v1/readings", body)
                if status in (200, 201):
                    with self.lock:
                        self.acks.append((body, status, answer, attempts))
                    break
                if 400 <= status < 500:
                    self.refused.append((status, answer))
                    return
                if status == 0:
                    self.unanswered += 1
                else:
                    self.server_errors += 1
                time.sleep(0.05)


def wait_for_acks(acks: list, lock, at_least: int, timeout: float = 60) -> None:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        with lock:
            if len(acks) >= at_least:
                return
        time.sleep(0.01)
    raise AssertionError(f"only {len(acks)} acknowledgements in {timeout} s, wanted {at_least}")


def test_sigkill_during_submissions_loses_nothing_acknowledged(backend, tmp_path):
    env = {**backend.env(), "SLIPWISE_DATA_DIR": str(tmp_path / "data")}
    tokens = accounts(env)
    server = Server(env).start()
    senders: list[Sender] = []
    stop = threading.Event()
    try:
        status, _, motor = Http(server.base, tokens["sid"]).call("POST", "/api/v1/motors", MOTOR)
        assert status == 201, motor
        acks: list = []
        lock = threading.Lock()
        senders = [Sender(server.base, tokens["tova"], motor["id"], i, acks, lock, stop) for i in range(CLIENTS)]
        for s in senders:
            s.start()
        for round_ in (1, 2):
            wait_for_acks(acks, lock, round_ * ACKS_BETWEEN_KILLS)
            server.kill()              # in the middle of the stream: requests are in flight
            time.sleep(0.3)            # clients keep retrying against a closed port
            server.start()             # same database, same port
        wait_for_acks(acks, lock, 3 * ACKS_BETWEEN_KILLS)
        stop.set()
        for s in senders:
            s.join(60)
            assert not s.is_alive(), "a client never got its reading acknowledged"
        refused = [r for s in senders for r in s.refused]
        assert refused == [], refused

        stored = assert_nothing_half_written(backend)
        by_client = {r["client_id"]: r for r in stored}
        acked = {body["client_id"]: (status, answer) for body, status, answer, _ in acks}
        assert len(acked) == len(acks), "each reading was acknowledged once by its own client"
        # every acknowledged reading is there exactly once, with the id and result it was acknowledged with
        assert set(by_client) == set(acked), (sorted(set(acked) - set(by_client)), sorted(set(by_client) - set(acked)))
        assert len(stored) == len(acks)
        for cid, (status, answer) in acked.items():
            row = by_client[cid]
            assert answer["id"] == row["id"] and answer["client_id"] == cid
            assert answer["result"]["slip_pct"] == pytest.approx(json.loads(row["result"])["slip_pct"])
        # the restarted server serves them all, and a replay now is a replay
        status, _, log = Http(server.base, tokens["sid"]).call("GET", f"/api/v1/readings?motor_id={motor['id']}")
        assert status == 200 and log["count"] == len(acks)
        body, _, first, _ = acks[0]
        again = Http(server.base, tokens["tova"]).call("POST", "/api/v1/readings", body)
        assert again[0] == 200 and again[2]["id"] == first["id"]

        unanswered = sum(s.unanswered for s in senders)
        replays = sum(1 for _, status, _, attempts in acks if status == 200)
        retried = sum(1 for *_, attempts in acks if attempts > 1)
        print(f"\nFIGURE crash ({backend.kind}): {len(acks)} readings acknowledged and stored once across 2 SIGKILLs; "
              f"{retried} needed retries ({unanswered} unanswered attempts, "
              f"{sum(s.server_errors for s in senders)} 5xx), {replays} acknowledged as a replay (stored before "
              "the answer was lost)")
        assert unanswered > 0, "the kills happened while requests were in flight"
    finally:
        stop.set()
        server.stop()
