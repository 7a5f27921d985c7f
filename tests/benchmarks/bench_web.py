"""Load benchmark of the local web page (run on demand, not part of the test suite).

    python tests/benchmarks/bench_web.py                    # 16 clients, 3 rounds
    python tests/benchmarks/bench_web.py --clients 32 --requests 100 --rounds 5

Starts ``stowflow serve`` on a free loopback port in a subprocess (one worker, two waiting by
default) and measures, with plain standard-library HTTP clients in threads:

1. **Form page, idle server.**  ``--clients`` clients each fetch ``GET /`` ``--requests``
   times over one kept-alive connection: p50 / p95 / max latency [ms] and throughput [1/s].
2. **Oversized streamed upload.**  Chunked uploads (no Content-Length) of 50 MB over a raw
   socket, of short CSV lines and of one endless line: how many bytes went out before the
   server answered 413 (the client's count includes what sits in the socket buffers).
3. **Burst of designs.**  ``workers + queue + --extra`` clients press "try the demo cycle" at
   the same moment: exactly ``workers + queue`` must be accepted (303) and the rest refused
   with 503 and a Retry-After header; the latency of a refusal [ms] is reported.
4. **Form page while the designs run.**  Step 1 again while the worker processes keep the CPU
   busy: does the page stay responsive?

Each round uses a fresh server; the medians over the rounds are printed at the end.
"""

from __future__ import annotations

import argparse
import http.client
import select
import signal
import socket
import statistics
import subprocess
import sys
import threading
import time

BOUNDARY = "benchboundary"
DEMO_BODY = (
    f'--{BOUNDARY}\r\nContent-Disposition: form-data; name="use_demo"\r\n\r\n1\r\n'
    f"--{BOUNDARY}--\r\n"
).encode()
FORM_HEADERS = {
    "Content-Type": f"multipart/form-data; boundary={BOUNDARY}",
    "Content-Length": str(len(DEMO_BODY)),
}


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_server(port: int, workers: int, queue: int) -> subprocess.Popen:
    cmd = [sys.executable, "-m", "optimiser", "serve", "--port", str(port)]
    cmd += ["--workers", str(workers), "--queue", str(queue)]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=0.5):
                return proc
        except OSError:
            time.sleep(0.1)
    proc.kill()
    raise SystemExit("stowflow serve did not start")


def stop_server(proc: subprocess.Popen) -> None:
    proc.send_signal(signal.SIGINT)
    try:
        proc.wait(timeout=30)
    except subprocess.TimeoutExpired:
        proc.kill()


def pct(values: list[float], q: float) -> float:
    values = sorted(values)
    return values[min(len(values) - 1, round(q * (len(values) - 1)))]


def form_page_load(port: int, clients: int, requests: int) -> dict:
    """``clients`` threads × ``requests`` GET /; latencies [ms] and throughput [1/s]."""
    latencies: list[float] = []
    errors: list[str] = []
    lock = threading.Lock()
    start = threading.Barrier(clients + 1)

    def client() -> None:
        conn = http.client.HTTPConnection("127.0.0.1", port, timeout=30)
        mine = []
        start.wait()
        for _ in range(requests):
            t0 = time.perf_counter()
            conn.request("GET", "/")
            r = conn.getresponse()
            r.read()
            mine.append(1e3 * (time.perf_counter() - t0))
            if r.status != 200:
                errors.append(str(r.status))
        conn.close()
        with lock:
            latencies.extend(mine)

    threads = [threading.Thread(target=client) for _ in range(clients)]
    for t in threads:
        t.start()
    start.wait()
    t0 = time.perf_counter()
    for t in threads:
        t.join()
    wall = time.perf_counter() - t0
    return {
        "p50_ms": pct(latencies, 0.50),
        "p95_ms": pct(latencies, 0.95),
        "max_ms": max(latencies),
        "rps": len(latencies) / wall,
        "errors": len(errors),
    }


def burst(port: int, n: int) -> dict:
    """``n`` simultaneous demo submissions: status codes, Retry-After, refusal latency [ms]."""
    results: list[tuple[int, str | None, float]] = []
    lock = threading.Lock()
    start = threading.Barrier(n)

    def client() -> None:
        conn = http.client.HTTPConnection("127.0.0.1", port, timeout=60)
        start.wait()
        t0 = time.perf_counter()
        conn.request("POST", "/studies", body=DEMO_BODY, headers=FORM_HEADERS)
        r = conn.getresponse()
        r.read()
        with lock:
            results.append((r.status, r.getheader("Retry-After"), time.perf_counter() - t0))
        conn.close()

    threads = [threading.Thread(target=client) for _ in range(n)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    refused = [ms for s, _, ms in results if s == 503]
    return {
        "accepted": sum(1 for s, _, _ in results if s == 303),
        "refused": len(refused),
        "other": sorted(s for s, _, _ in results if s not in (303, 503)),
        "retry_after_ok": all(h and int(h) >= 1 for s, h, _ in results if s == 503),
        "refusal_p50_ms": 1e3 * statistics.median(refused) if refused else float("nan"),
    }


def streamed_oversize(
    port: int, *, lines: bool, total: int = 50_000_000, chunk: int = 64_000
) -> dict:
    """Send a chunked 50 MB upload; count the bytes sent before the server answered.

    ``lines``: short CSV lines (the line limit trips first) or one endless line without a
    line break (the byte limit trips).
    """
    head = (
        f"POST /studies HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n"
        f"Content-Type: multipart/form-data; boundary={BOUNDARY}\r\n"
        "Transfer-Encoding: chunked\r\n\r\n"
    ).encode()
    part = (
        f'--{BOUNDARY}\r\nContent-Disposition: form-data; name="cycle"; filename="big.csv"\r\n'
        "Content-Type: text/csv\r\n\r\nduration [s], flow [L/min]\r\n"
    ).encode()
    line = b"1, 10\r\n" * (chunk // 7) if lines else b"1" * chunk
    sent = 0
    t0 = time.perf_counter()
    answer = b""
    with socket.create_connection(("127.0.0.1", port), timeout=30) as s:
        s.sendall(head)
        body = [part] + [line] * (total // len(line))
        for piece in body:
            try:
                s.sendall(b"%x\r\n%s\r\n" % (len(piece), piece))
            except (BrokenPipeError, ConnectionResetError):
                break
            sent += len(piece)
            if select.select([s], [], [], 0)[0]:
                break
        try:
            s.settimeout(10)
            answer = s.recv(200)
        except OSError:
            pass
    status = answer.split(b"\r\n", 1)[0].decode("latin-1", "replace")
    return {"status": status, "sent_mb": sent / 1e6, "seconds": time.perf_counter() - t0}


def one_round(args) -> dict:
    port = free_port()
    proc = start_server(port, args.workers, args.queue)
    try:
        form_page_load(port, 2, 5)  # warm the connection pool and the templates
        idle = form_page_load(port, args.clients, args.requests)
        # Before the burst: a full queue refuses an upload unread.
        big = streamed_oversize(port, lines=True)
        long = streamed_oversize(port, lines=False)
        b = burst(port, args.workers + args.queue + args.extra)
        busy = form_page_load(port, args.clients, args.requests)
    finally:
        stop_server(proc)
    return {"idle": idle, "burst": b, "busy": busy, "upload": big, "long": long}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clients", type=int, default=16)
    ap.add_argument("--requests", type=int, default=50, help="GET / per client")
    ap.add_argument("--workers", type=int, default=1)
    ap.add_argument("--queue", type=int, default=2)
    ap.add_argument("--extra", type=int, default=5, help="submissions beyond workers + queue")
    ap.add_argument("--rounds", type=int, default=3)
    args = ap.parse_args()
    rounds = []
    for k in range(args.rounds):
        r = one_round(args)
        rounds.append(r)
        i, b, u, big = r["idle"], r["burst"], r["busy"], r["upload"]
        print(
            f"round {k + 1}: GET / idle p50 {i['p50_ms']:.1f} ms, p95 {i['p95_ms']:.1f} ms, "
            f"{i['rps']:.0f}/s; busy p50 {u['p50_ms']:.1f} ms, p95 {u['p95_ms']:.1f} ms, "
            f"{u['rps']:.0f}/s; burst {b['accepted']} accepted, {b['refused']} refused (503, "
            f"Retry-After {'ok' if b['retry_after_ok'] else 'MISSING'}) in "
            f"{b['refusal_p50_ms']:.1f} ms; 50 MB stream: '{big['status']}' after "
            f"{big['sent_mb']:.1f} MB (short lines), '{r['long']['status']}' after "
            f"{r['long']['sent_mb']:.1f} MB (one long line)",
            flush=True,
        )
        if b["accepted"] != args.workers + args.queue or b["other"] or i["errors"]:
            print(f"  UNEXPECTED: {b}, idle errors {i['errors']}, busy errors {u['errors']}")

    def med(part: str, key: str) -> float:
        return statistics.median(r[part][key] for r in rounds)

    print(
        f"\nmedians over {len(rounds)} rounds ({args.clients} clients × {args.requests} GET /, "
        f"{args.workers} worker(s), queue {args.queue}):"
    )
    print(
        f"  form page, idle server:  p50 {med('idle', 'p50_ms'):.1f} ms, "
        f"p95 {med('idle', 'p95_ms'):.1f} ms, max {med('idle', 'max_ms'):.1f} ms, "
        f"{med('idle', 'rps'):.0f} requests/s"
    )
    print(
        f"  form page, designs busy: p50 {med('busy', 'p50_ms'):.1f} ms, "
        f"p95 {med('busy', 'p95_ms'):.1f} ms, max {med('busy', 'max_ms'):.1f} ms, "
        f"{med('busy', 'rps'):.0f} requests/s"
    )
    print(
        f"  burst of {args.workers + args.queue + args.extra}: accepted "
        f"{med('burst', 'accepted'):.0f}, refused {med('burst', 'refused'):.0f} with 503 in "
        f"p50 {med('burst', 'refusal_p50_ms'):.1f} ms"
    )
    print(
        f"  50 MB streamed upload: answered after {med('upload', 'sent_mb'):.1f} MB sent (short "
        f"lines: line limit), {med('long', 'sent_mb'):.1f} MB (one line: 5 MB byte limit)"
    )


if __name__ == "__main__":
    main()
