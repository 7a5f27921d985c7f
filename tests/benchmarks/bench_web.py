"""Load benchmark of the local web page (run on demand, not part of the test suite).

    python tests/benchmarks/bench_web.py                    # 16 clients, 3 rounds
    python tests/benchmarks/bench_web.py --parts report,load  # upload→report, 50 at once
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

Each round uses a fresh server; the medians over the rounds are printed at the end.  Then,
each once on a fresh server:

5. **Upload to finished report.**  The bundled demo cycle (the "try the demo cycle" button,
   default settings), ``--report-runs`` times one after the other through one server with one
   worker: the time from sending the form to having report.html in hand [s], median and each
   run (the first includes the fork server's warm-up).
6. **Burst of uploads.**  ``--load-clients`` clients upload a small invented cycle at the same
   moment (``--workers 1 --queue 4``, as tests/test_web_load.py): completed, refused (503),
   anything else, p95 latency of the answers [ms], and the peak resident memory of the server
   with its fork server and job processes [MiB].

``--parts`` chooses among ``pages`` (1-4), ``report`` (5) and ``load`` (6).
"""

from __future__ import annotations

import argparse
import http.client
import select
import socket
import statistics
import sys
import tempfile
import threading
import time
from pathlib import Path

import httpx

# tests/ is no package: the helpers shared with the web tests are found by path.
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from _web_server import (
    load_run,
    percentile,
    same_origin,
    start_serve,
    stop_serve,
    upload_burst,
    wait_final,
)

BOUNDARY = "benchboundary"
#: Upload of the load burst: the small cycle on a coarse grid (as tests/test_web_load.py).
LOAD_FIELDS = {"step": "0.5s"}


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
        "p50_ms": percentile(latencies, 0.50),
        "p95_ms": percentile(latencies, 0.95),
        "max_ms": max(latencies),
        "rps": len(latencies) / wall,
        "errors": len(errors),
    }


def burst(url: str, n: int) -> dict:
    """``n`` simultaneous demo submissions: status codes, Retry-After, refusal latency [ms]."""
    answers = upload_burst(url, n, None, use_demo="1")
    refused = [a.seconds for a in answers if a.status == 503]
    return {
        "accepted": sum(1 for a in answers if a.status == 303),
        "refused": len(refused),
        "other": sorted(a.status for a in answers if a.status not in (303, 503)),
        "retry_after_ok": all(
            a.retry_after and int(a.retry_after) >= 1 for a in answers if a.status == 503
        ),
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
        f"Origin: http://127.0.0.1:{port}\r\n"
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
    served = start_serve("--workers", str(args.workers), "--queue", str(args.queue))
    port = served.port
    try:
        form_page_load(port, 2, 5)  # warm the connection pool and the templates
        idle = form_page_load(port, args.clients, args.requests)
        # Before the burst: a full queue refuses an upload unread.
        big = streamed_oversize(port, lines=True)
        long = streamed_oversize(port, lines=False)
        b = burst(served.url, args.workers + args.queue + args.extra)
        busy = form_page_load(port, args.clients, args.requests)
    finally:
        stop_serve(served)
    return {"idle": idle, "burst": b, "busy": busy, "upload": big, "long": long}


def pages(args) -> None:
    """Parts 1-4, over ``--rounds`` fresh servers."""
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


def report_time(runs: int) -> None:
    """Part 5: demo cycle, upload to report.html in hand, ``runs`` times on one server."""
    served = start_serve("--workers", "1")
    seconds, states = [], []
    try:
        with httpx.Client(
            base_url=served.url, timeout=120, headers=same_origin(served.url)
        ) as client:
            for _ in range(runs):
                t0 = time.perf_counter()
                r = client.post("/studies", files={"use_demo": (None, "1")})
                location = r.headers["location"]
                status = wait_final(client, location, 300)
                report = client.get(f"{location}/report")
                seconds.append(time.perf_counter() - t0)
                states.append(f"{status['state']}/{(status['summary'] or {}).get('status')}")
                if report.status_code != 200:
                    print(f"  UNEXPECTED: {location}: {status}, report {report.status_code}")
    finally:
        stop_serve(served)
    print(
        f"\ndemo cycle, upload to report.html (1 worker, {runs} runs one after the other, "
        f"status polled every 0.1 s): median {statistics.median(seconds):.1f} s; runs "
        + ", ".join(f"{s:.1f}" for s in seconds)
        + f" s (the first includes the fork server's warm-up); {', '.join(sorted(set(states)))}"
    )


def load(clients: int) -> None:
    """Part 6: ``clients`` uploads at once against one worker and four places."""
    with tempfile.TemporaryDirectory(prefix="bench-web-") as tmp:
        run = load_run(Path(tmp), clients, workers=1, queue=4, finish_s=120, **LOAD_FIELDS)
    latencies = [1e3 * a.seconds for a in run.answers]
    done = sum(1 for f in run.finals if f["state"] == "done")
    other = sorted(a.status for a in run.answers if a.status not in (303, 503))
    print(
        f"\n{clients} uploads at once (--workers 1 --queue 4, 3-phase invented cycle, 0.5 s "
        f"step, ideal gas, bladder): {len(run.accepted)} accepted of which {done} completed, "
        f"{len(run.refused)} refused (503, Retry-After "
        f"{'on all' if all(a.retry_after for a in run.refused) else 'MISSING'}), "
        f"other {other or 'none'}; answer latency p50 {percentile(latencies, 0.5):.0f} ms, "
        f"p95 {percentile(latencies, 0.95):.0f} ms, max {max(latencies):.0f} ms; peak memory "
        f"{run.peak_total_mib:.0f} MiB for the whole tree ({run.processes} processes seen, "
        f"largest one {run.peak_process_mib:.0f} MiB); GET / after: {run.form_status}; "
        f"left in TMPDIR after Ctrl+C: {run.left or 'nothing'}"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clients", type=int, default=16)
    ap.add_argument("--requests", type=int, default=50, help="GET / per client")
    ap.add_argument("--workers", type=int, default=1)
    ap.add_argument("--queue", type=int, default=2)
    ap.add_argument("--extra", type=int, default=5, help="submissions beyond workers + queue")
    ap.add_argument("--rounds", type=int, default=3)
    ap.add_argument("--report-runs", type=int, default=5, help="demo designs, one by one")
    ap.add_argument("--load-clients", type=int, default=50, help="uploads at the same moment")
    ap.add_argument("--parts", default="pages,report,load", help="of pages, report, load")
    args = ap.parse_args()
    parts = {p.strip() for p in args.parts.split(",")}
    if parts - {"pages", "report", "load"}:
        ap.error(f"--parts {args.parts}: expected a comma list of pages, report, load")
    if "pages" in parts:
        pages(args)
    if "report" in parts:
        report_time(args.report_runs)
    if "load" in parts:
        load(args.load_clients)


if __name__ == "__main__":
    main()
