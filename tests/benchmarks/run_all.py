"""Every benchmark in one command; writes tests/benchmarks/RESULTS.md and prints it.

    .venv/bin/python tests/benchmarks/run_all.py            # the full run, about 6 minutes on 2 cores
    .venv/bin/python tests/benchmarks/run_all.py --quick    # short runs, to check that it works

Runs, each as its own process (so no run warms another's caches):

- bench_engine.py: 1,000,000 readings over 1,000 nameplates against pandas reading the CSV;
- bench_service.py: submissions through ``slipwise serve`` as a ratio of a trivial endpoint, the day's
  log of 10,000 readings, the CSV export of 100,000 readings against pandas ``to_csv``;
- the page's start weight: the bytes of everything the page needs to start (index.html, what it links,
  the module graph of /js/app.js, the service worker and its precache list), as files on disk,
  uncompressed, as the server sends them;
- bench_load.py: 60 s at 32 connections with each of two mixes (the API's: submissions, SVG pictures, full day
  log, export; the page's: submissions, curve numbers, listing, one reading, export), then each request alone;
- bench_submission_profile.py: where one submission's time goes (cProfile, in-process).

The goals are the issues' (issue 2: engine; issue 3: service; issue 4: page; issue 5: load). The
machine line says what ran them: these are shared machines, so ratios measured in one run mean more
than absolute figures.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import os
import platform
import posixpath
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[1]
STATIC = REPO / "static"
RESULTS = HERE / "RESULTS.md"


# --- the machine -------------------------------------------------------------------------
def machine() -> dict:
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.lower().startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    memory = None
    try:
        kb = int(re.search(r"MemTotal:\s+(\d+) kB", Path("/proc/meminfo").read_text()).group(1))
        memory = f"{kb / 1024 / 1024:.1f} GiB"
    except (OSError, AttributeError):
        pass
    return {"cpu": cpu, "cores": os.cpu_count(), "memory": memory or "unknown",
            "date": dt.datetime.now(dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
            "python": platform.python_version(), "system": f"{platform.system()} {platform.release()}",
            "load_average_before": " ".join(f"{x:.2f}" for x in os.getloadavg())}


# --- page weight ---------------------------------------------------------------------------------
def _static_file(url_path: str) -> Path:
    return STATIC / ("index.html" if url_path in ("/", "/index.html") else url_path.lstrip("/"))


def page_weight() -> dict:
    """Bytes of every file the page fetches to start, from the files the server sends."""
    sw = (STATIC / "sw.js").read_text(encoding="utf-8")
    block = re.search(r"const PRECACHE = \[(.*?)\];", sw, re.S)
    if not block:
        raise SystemExit("static/sw.js: no PRECACHE list found")
    precache = re.findall(r'"([^"]+)"', block.group(1))
    # screens loaded only when opened (the worker's NETWORK_ONLY list) are not part of the start
    later = re.search(r"const NETWORK_ONLY = \[(.*?)\];", sw, re.S)
    when_opened = set(re.findall(r'"([^"]+)"', later.group(1))) if later else set()
    needed = {"/", "/sw.js", *precache}
    html = (STATIC / "index.html").read_text(encoding="utf-8")
    needed |= {u for u in re.findall(r'(?:src|href)="(/[^"#]*)"', html)}
    # the module graph, static and dynamic imports
    todo = [u for u in needed if u.endswith(".js") and u != "/sw.js"]
    while todo:
        url = todo.pop()
        text = _static_file(url).read_text(encoding="utf-8")
        for rel in re.findall(r'(?:from\s+|import\s*\(\s*)"(\./[^"]+)"', text):
            dep = posixpath.normpath(posixpath.join(posixpath.dirname(url), rel))
            if dep not in needed and dep not in when_opened:
                needed.add(dep)
                todo.append(dep)
    sizes = {u: _static_file(u).stat().st_size for u in sorted(needed)}
    missing_from_precache = sorted(u for u in needed if u not in precache and u != "/sw.js")
    return {"files": len(sizes), "bytes": sum(sizes.values()), "kb": sum(sizes.values()) / 1024, "sizes": sizes,
            "not_precached": missing_from_precache,
            "loaded_when_opened": {u: _static_file(u).stat().st_size for u in sorted(when_opened)}}


# --- the runs ----------------------------------------------------------------------------------------
def run_script(name: str, args: list[str], tmp: Path, timeout: float) -> tuple[dict, str, float]:
    out = tmp / f"{name}.json"
    t0 = time.monotonic()
    r = subprocess.run([sys.executable, str(HERE / name), *args, "--json", str(out)], cwd=REPO, text=True,
                       capture_output=True, timeout=timeout)
    elapsed = time.monotonic() - t0
    sys.stdout.write(r.stdout)
    sys.stdout.flush()
    if r.returncode or not out.exists():
        raise SystemExit(f"{name} failed ({r.returncode}):\n{r.stdout}\n{r.stderr}")
    return json.loads(out.read_text()), r.stdout, elapsed


def yes(ok: bool) -> str:
    return "yes" if ok else "**no**"


def table(m: dict, engine: dict, service: dict, page: dict, load: dict, quick: bool, profile: dict) -> str:
    rows = []
    rows.append((f"Engine: interpret {engine['rows']:,} readings over {engine['nameplates']:,} nameplates, as a "
                 "ratio of pandas reading the same CSV",
                 "≤ 1.0×", f"{engine['interpret_over_read']:.2f}× ({engine['interpret_s']:.1f} s vs "
                 f"{engine['csv_read_s']:.1f} s; {engine['rows_with_error']} rows with an error)",
                 yes(engine["interpret_over_read"] <= 1.0)))
    rows.append(("Engine: peak memory of that run", "≤ 1.5 GB", f"{engine['peak_memory_mb']:.0f} MB",
                 yes(engine["peak_memory_mb"] <= 1536)))
    whole = engine.get("whole_command")
    if whole:
        rows.append((f"Engine: the whole `slipwise analyze` command on {whole['rows']:,} readings (read, interpret, "
                     "write CSV) as a ratio of pandas reading the input and writing the same-shaped output",
                     "reported", f"{whole['command_over_pandas']:.2f}× ({whole['command_s']:.1f} s, "
                     f"{whole.get('output_mb', 0):.0f} MB); with --findings-legend "
                     f"{whole['command_findings_legend_over_pandas']:.2f}× "
                     f"({whole.get('output_findings_legend_mb', 0):.0f} MB with its legend)", "–"))
    if "submit_ratio" in service:
        rows.append(("Submissions stored and interpreted per second, 16 connections, as a ratio of GET /health "
                     "(same server, same run)", "≥ 0.4",
                     f"{service['submit_ratio']:.2f} ({service['submit_rps']:.0f} vs {service['trivial_rps']:.0f} req/s)",
                     yes(service["submit_ratio"] >= 0.4)))
        rows.append(("Submissions: p99 latency, errors", "≤ 100 ms, 0",
                     f"{service['submit_p99_ms']:.1f} ms, {service['submit_errors']}",
                     yes(service["submit_p99_ms"] <= 100 and service["submit_errors"] == 0)))
    rows.append((f"Day's log of {service['day_log_readings']:,} readings as JSON (GET /readings?date=)", "≤ 300 ms",
                 f"{service['day_log_ms']:.0f} ms ({service['day_log_mb']:.1f} MB)", yes(service["day_log_ms"] <= 300)))
    if "listing_ratio" in service:
        rows.append((f"Day's listing the supervisor's page draws ({service['listing_readings']:,} readings, "
                     f"{service['listing_pages']} pages by next): bytes per reading", "≤ 800",
                     f"{service['listing_bytes_per_reading']:.0f}", yes(service["listing_bytes_per_reading"] <= 800)))
        rows.append(("Day's listing: time over HTTP as a ratio of its bare query + json.dumps of the same rows "
                     "(same run)", "≤ 5×", f"{service['listing_ratio']:.2f}× ({service['listing_ms']:.0f} ms vs "
                     f"{service['listing_bare_ms']:.0f} ms)", yes(service["listing_ratio"] <= 5)))
    rows.append((f"CSV export of {service['export_readings']:,} readings, as a ratio of pandas to_csv of the same frame",
                 "≤ 2×", f"{service['export_ratio']:.2f}× ({service['export_s']:.2f} s vs "
                 f"{service['pandas_to_csv_s']:.2f} s, {service['export_mb']:.0f} MB)", yes(service["export_ratio"] <= 2)))
    rows.append(("Page: everything it needs to start, uncompressed", "≤ 200 KB",
                 f"{page['kb']:.1f} KB in {page['files']} files" + (
                     " (loaded when their screen is opened, not at start: " + ", ".join(
                         f"{u} {b:,} B" for u, b in page.get("loaded_when_opened", {}).items()) + ")"
                     if page.get("loaded_when_opened") else ""), yes(page["kb"] <= 200)))
    mix = ", ".join(f"{k.replace('_', ' ')} {v} %" for k, v in load["mix_pct"].items())
    rows.append((f"Load, {load['seconds']} s at {load['connections']} connections ({mix}): errors", "0",
                 f"{load['errors']} of {load['requests']:,} requests", yes(load["errors"] == 0)))
    rows.append(("Load: acknowledged readings missing from the database (count in the database = count "
                 "acknowledged)", "0",
                 f"{load['acknowledged_missing']} ({load['acknowledged']:,} acknowledged, {load['stored']:,} stored; "
                 f"{load['stored_answer_cut_off']} stored as the load generator hung up at the end)",
                 yes(load["acknowledged_missing"] == 0 and load["stored_without_audit"] == 0)))
    rows.append(("Load: latency of the mix, p50 / p99", "reported",
                 f"{load['p50_ms']:.0f} ms / {load['p99_ms']:.0f} ms (max {load['max_ms']:.0f} ms)", "–"))
    rows.append(("Load: throughput of the mix as a ratio of GET /health (same server, same run)", "reported",
                 f"{load['ratio']:.3f} ({load['rps']:.0f} vs {load['trivial_rps']:.0f} req/s; "
                 f"{load['submissions_per_s']:.0f} readings stored per second)", "–"))
    page_mix = load.get("page_mix")
    if page_mix:
        pmix = ", ".join(f"{k.replace('_', ' ')} {v} %" for k, v in page_mix["mix_pct"].items())
        rows.append((f"Load, the page's mix ({pmix}), same server: errors, missing, p50 / p99, throughput", "reported",
                     f"{page_mix['errors']} errors of {page_mix['requests']:,}, {page_mix['acknowledged_missing']} "
                     f"missing; {page_mix['p50_ms']:.0f} ms / {page_mix['p99_ms']:.0f} ms (max "
                     f"{page_mix['max_ms']:.0f} ms); {page_mix['rps']:.0f} req/s, ratio {page_mix['ratio']:.3f}", "–"))
    if load.get("alone"):
        alone = "; ".join(f"{k.replace('_', ' ')} {a['rps']:.0f} req/s, p99 {a['p99_ms']:.0f} ms, one at a time "
                          f"{a['sequential_median_ms']:.1f} ms" for k, a in load["alone"].items())
        rows.append(("Load: each request type alone, same connections, and one request at a time (median)",
                     "reported", alone, "–"))
    shares = ", ".join(f"{k} {100 * v:.0f} %" for k, v in profile["shares"].items())
    rows.append(("Submission profile (cProfile, in-process, no HTTP): where one submission's time goes", "reported",
                 f"{profile['submit_inprocess_ms']:.1f} ms per submission vs {profile['health_inprocess_ms']:.2f} ms "
                 f"for GET /health; {shares}", "–"))
    lines = ["| figure | goal | result | met? |", "|---|---|---|---|"]
    lines += [f"| {a} | {b} | {c} | {d} |" for a, b, c, d in rows]
    head = [
        "# slipwise benchmark results",
        "",
        f"Machine: {m['cpu']}, {m['cores']} cores, {m['memory']} memory; {m['system']}, Python {m['python']}; "
        f"database {service.get('database', 'sqlite')}; load average before the run {m['load_average_before']}. "
        f"Date: {m['date']}." + (" **Quick run (shortened): not the published figures.**" if quick else ""),
        "",
        "Re-run: `.venv/bin/python tests/benchmarks/run_all.py` (about 6 minutes; `DATABASE_URL=postgresql+psycopg://...` "
        "runs the service and load benchmarks on PostgreSQL). Server: `slipwise serve` (gunicorn, 2 workers x 4 "
        "threads) on loopback; load generator wrk.",
        "",
    ]
    notes = [
        "",
        "Notes:",
        "",
        "- The load mix has no think time: 32 connections each send the next request as soon as the answer "
        "arrives, so its latency is mostly queueing behind the busiest requests (32 connections on 8 server "
        "threads: the mean latency is about 32 / throughput). The API mix's pictures are SVG written directly from "
        "the curve's numbers (matplotlib drew them until it held a worker's interpreter lock ~140 ms each); a "
        "submission is now the largest share of the mix's time.",
        "- \"Stored as the load generator hung up\": submissions the server committed while wrk closed its "
        "connections at the end of the run; they were never acknowledged, and a real client would replay them "
        "with the same client_id and get 200.",
        f"- Page start weight by file: " + ", ".join(f"{u} {b:,} B" for u, b in page["sizes"].items()) + ".",
    ]
    return "\n".join(head + lines + notes) + "\n"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="short runs to check the command (not for publishing)")
    parser.add_argument("--output", default=str(RESULTS), help=f"where to write the table (default {RESULTS})")
    args = parser.parse_args()
    m = machine()
    with tempfile.TemporaryDirectory(prefix="slipwise-bench-all-") as tmp_name:
        tmp = Path(tmp_name)
        if args.quick:
            eng_args, svc_args, load_args = (["--rows", "100000", "--nameplates", "200"],
                                             ["--seconds", "3", "--day-rows", "2000", "--export-rows", "10000"],
                                             ["--seconds", "10", "--trivial-seconds", "3", "--alone-seconds", "3"])
        else:
            eng_args, svc_args, load_args = [], [], []
        print("== engine", flush=True)
        engine, _, t_engine = run_script("bench_engine.py", eng_args, tmp, 1800)
        print("== service", flush=True)
        service, _, t_service = run_script("bench_service.py", svc_args, tmp, 1800)
        print("== page weight", flush=True)
        page = page_weight()
        print(json.dumps({k: v for k, v in page.items() if k != "sizes"}))
        print("== load", flush=True)
        load, _, t_load = run_script("bench_load.py", load_args, tmp, 600)
        print("== submission profile", flush=True)
        profile, _, _ = run_script("bench_submission_profile.py", ["--count", "50" if args.quick else "200"], tmp, 600)
    text = table(m, engine, service, page, load, args.quick, profile)
    Path(args.output).write_text(text, encoding="utf-8")
    print()
    print(text)
    print(f"(engine {t_engine:.0f} s, service {t_service:.0f} s, load {t_load:.0f} s; written to {args.output})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
