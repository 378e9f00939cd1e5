"""Online evidence against a real HTTP server on 127.0.0.1 started by each test (never the internet).

The server answers in the documented shapes of Ensembl's REST API:
* ``GET /vep/human/region/{region}/{allele}`` returns a JSON list with one object per input
  whose ``colocated_variants`` hold ``frequencies`` (allele -> ``gnomade``, ``gnomade_<group>``,
  ``gnomadg`` ...), ``clin_sig`` and ``clin_sig_allele`` ("A:pathogenic;G:benign")
  (rest.ensembl.org/documentation/info/vep_region_get; field names as in published answers,
  e.g. the ``af_gnomade=1`` examples in Ensembl's REST documentation - from memory);
* ``GET /info/data`` returns ``{"releases": [N]}`` (rest.ensembl.org/documentation/info/data);
* HTTP 429 with a fractional ``Retry-After`` header in seconds when the rate limit is exceeded
  (github.com/Ensembl/ensembl-rest/wiki/Rate-Limits).
Answer values are constructed for the test. The published variant is RPGRIP1 c.2662C>T
p.(Arg888Ter), chr14:21326125 C>T (PMID 23505306; see tests/test_bundle.py).
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import threading
import time
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

import pytest

from irdtriage.errors import InputError
from irdtriage.evidence.online import HttpClient, open_provider, region_and_allele
from irdtriage.pipeline import triage

from test_bundle import COMMON_CSQ, NULL_CSQ, RPGRIP1_COMMON, RPGRIP1_NULL, patient_vcf

ROOT = Path(__file__).resolve().parents[1]

NULL_PATH = "/vep/human/region/14:21326125-21326125:1/T"
COMMON_PATH = "/vep/human/region/14:21317778-21317778:1/G"

ANSWERS = {
    NULL_PATH: [{
        "input": "14 21326125 21326125 C/T 1", "assembly_name": "GRCh38", "seq_region_name": "14",
        "start": 21326125, "end": 21326125, "allele_string": "C/T", "strand": 1,
        "most_severe_consequence": "stop_gained",
        "colocated_variants": [{"id": "rsTEST1", "start": 21326125, "end": 21326125, "strand": 1,
                                "seq_region_name": "14", "allele_string": "C/T", "clin_sig": ["pathogenic"],
                                "clin_sig_allele": "T:pathogenic"}],
    }],
    COMMON_PATH: [{
        "input": "14 21317778 21317778 C/G 1", "assembly_name": "GRCh38", "seq_region_name": "14",
        "start": 21317778, "end": 21317778, "allele_string": "C/G", "strand": 1,
        "colocated_variants": [{"id": "rsTEST2", "start": 21317778, "end": 21317778, "strand": 1,
                                "allele_string": "C/G", "clin_sig": ["benign"], "clin_sig_allele": "G:benign",
                                "frequencies": {"G": {"gnomade": 0.15, "gnomade_nfe": 0.3, "gnomade_afr": 0.02,
                                                      "gnomade_fin": 0.6, "gnomadg": 0.14, "af": 0.2}}}],
    }],
}


class Server:
    """http.server in a thread; ``plan[path]`` is a list of (status, headers, body or delay) used in turn."""

    def __init__(self):
        self.hits: list[str] = []
        self.raw: list[bytes] = []
        self.plan: dict[str, list[tuple]] = {}
        outer = self

        class Handler(BaseHTTPRequestHandler):
            def log_message(self, *a):
                pass

            def do_GET(self):
                path = self.path.split("?", 1)[0]
                outer.hits.append(path)
                outer.raw.append(self.requestline.encode() + b"\n" + bytes(self.headers))
                steps = outer.plan.get(path)
                if steps:
                    status, headers, body = steps.pop(0) if len(steps) > 1 else steps[0]
                elif path == "/info/data":
                    status, headers, body = 200, {}, {"releases": [112]}
                elif path in ANSWERS:
                    status, headers, body = 200, {}, ANSWERS[path]
                else:
                    status, headers, body = 400, {}, {"error": "no data for this test"}
                if isinstance(body, float):  # a delay: answer late (for timeouts)
                    time.sleep(body)
                    body = ANSWERS.get(path, {})
                data = json.dumps(body).encode()
                self.send_response(status)
                self.send_header("Content-Type", "application/json")
                self.send_header("Content-Length", str(len(data)))
                for k, v in headers.items():
                    self.send_header(k, v)
                self.end_headers()
                try:
                    self.wfile.write(data)
                except (BrokenPipeError, ConnectionResetError):
                    pass

        self.httpd = ThreadingHTTPServer(("127.0.0.1", 0), Handler)
        self.httpd.daemon_threads = True
        self.url = f"http://127.0.0.1:{self.httpd.server_address[1]}"
        self.thread = threading.Thread(target=self.httpd.serve_forever, daemon=True)

    def count(self, path: str) -> int:
        return self.hits.count(path)

    def __enter__(self):
        self.thread.start()
        return self

    def __exit__(self, *exc):
        self.httpd.shutdown()
        self.httpd.server_close()
        self.thread.join(timeout=10)


@pytest.fixture
def server():
    with Server() as s:
        yield s


def client(server, tmp_path, **kw) -> HttpClient:
    kw.setdefault("timeout", 5.0)
    kw.setdefault("min_interval", 0.0)
    return HttpClient(server.url, str(tmp_path / "cache.sqlite"), **kw)


def test_region_notation_for_snv_deletion_insertion():
    # Ensembl region/allele convention (from memory): shared bases trimmed, deletion allele "-",
    # insertion written with end = start - 1
    assert region_and_allele("chr14", 21326125, "C", "T") == ("14:21326125-21326125:1", "T")
    assert region_and_allele("14", 1000, "CAG", "C") == ("14:1001-1002:1", "-")
    assert region_and_allele("chrX", 500, "A", "AT") == ("X:501-500:1", "T")
    assert region_and_allele("chrM", 73, "A", "G") == ("MT:73-73:1", "G")


def test_answers_are_cached_and_a_second_client_asks_nothing(server, tmp_path):
    c = client(server, tmp_path)
    a = c.get_json(COMMON_PATH)
    assert a.data == ANSWERS[COMMON_PATH] and a.from_cache is False and c.counts["sent"] == 1
    c.close()
    c2 = client(server, tmp_path)
    b = c2.get_json(COMMON_PATH)
    assert b.data == a.data and b.from_cache is True and b.fetched == a.fetched
    assert server.count(COMMON_PATH) == 1 and c2.counts == {"sent": 0, "from_cache": 1, "failed": 0,
                                                            "not_in_cache": 0, "retried": 0}
    c2.close()


def test_expired_answers_are_fetched_again(server, tmp_path):
    c = client(server, tmp_path, expire_days=0.3 / 86400)  # 0.3 s
    c.get_json(COMMON_PATH)
    time.sleep(0.5)
    again = c.get_json(COMMON_PATH)
    assert again.from_cache is False and server.count(COMMON_PATH) == 2
    c.close()


def test_rate_limit_waits_retry_after_then_succeeds(server, tmp_path):
    server.plan[COMMON_PATH] = [(429, {"Retry-After": "0.05"}, {"error": "slow down"}),
                                (429, {"Retry-After": "0.05"}, {"error": "slow down"}),
                                (200, {}, ANSWERS[COMMON_PATH])]
    c = client(server, tmp_path)
    a = c.get_json(COMMON_PATH)
    assert a.data == ANSWERS[COMMON_PATH] and c.counts["retried"] == 2 and server.count(COMMON_PATH) == 3
    assert c.warnings == []
    c.close()


def test_rate_limit_retries_are_bounded_and_long_waits_refused(server, tmp_path):
    server.plan[COMMON_PATH] = [(429, {"Retry-After": "0.01"}, {"error": "slow down"})]  # always
    c = client(server, tmp_path, retries=2)
    a = c.get_json(COMMON_PATH)
    assert a.data is None and a.status == 429 and server.count(COMMON_PATH) == 3  # 1 + 2 retries
    assert "HTTP 429 (rate limit) after 3 attempt(s)" in c.warnings[0]
    server.plan[NULL_PATH] = [(429, {"Retry-After": "3600"}, {"error": "slow down"})]
    b = c.get_json(NULL_PATH)
    assert b.data is None and server.count(NULL_PATH) == 1
    assert any("asked to wait 3600 s" in w for w in c.warnings)
    c.close()


def test_server_error_is_a_warning_and_not_cached(server, tmp_path):
    server.plan[COMMON_PATH] = [(500, {}, {"error": "internal"})]
    c = client(server, tmp_path)
    a = c.get_json(COMMON_PATH)
    assert a.data is None and server.count(COMMON_PATH) == 1  # 500 is not retried
    assert "answered HTTP 500 (server error)" in c.warnings[0]
    server.plan.clear()
    assert c.get_json(COMMON_PATH).data == ANSWERS[COMMON_PATH]  # the error was not cached
    c.close()


def test_timeout_is_a_warning_and_stops_further_requests(server, tmp_path):
    server.plan[COMMON_PATH] = [(200, {}, 2.0)]  # answers after 2 s
    c = client(server, tmp_path, timeout=0.3)
    a = c.get_json(COMMON_PATH)
    assert a.data is None and a.problem == "timed out"
    assert "timed out" in c.warnings[0]
    c.get_json(NULL_PATH)
    assert server.count(NULL_PATH) == 0  # no further requests this run
    c.close()


def test_offline_replay_uses_only_the_cache(server, tmp_path):
    c = client(server, tmp_path, expire_days=0.2 / 86400)
    c.get_json(COMMON_PATH)
    c.close()
    time.sleep(0.3)  # expired: replay still answers from the cache
    r = client(server, tmp_path, offline_replay=True)
    a = r.get_json(COMMON_PATH)
    assert a.data == ANSWERS[COMMON_PATH] and a.from_cache
    miss = r.get_json(NULL_PATH)
    assert miss.data is None and r.counts["not_in_cache"] == 1
    assert server.count(COMMON_PATH) == 1 and server.count(NULL_PATH) == 0
    r.close()
    with pytest.raises(InputError, match="cache file does not exist"):
        HttpClient(server.url, str(tmp_path / "none.sqlite"), offline_replay=True)


def test_provider_reads_frequencies_and_assertions(server, tmp_path):
    p = open_provider("GRCh38", url=server.url, cache_path=str(tmp_path / "c.sqlite"), min_interval=0.0)
    pop = p.population(*RPGRIP1_COMMON)
    assert pop["found"] and pop["af"] == 0.15 and pop["dataset"] == "gnomAD exomes"
    # fin is left out of the group maximum (gnomAD's grpmax excludes bottlenecked groups)
    assert (pop["popmax_af"], pop["popmax_population"]) == (0.3, "nfe")
    assert pop["populations"]["fin"]["af"] == 0.6 and pop["faf95"] is None
    assert p.clinical(*RPGRIP1_COMMON)["clnsig"] == "benign"
    # known to the service without frequencies: not absent, just unknown
    assert p.population(*RPGRIP1_NULL) is None
    assert p.clinical(*RPGRIP1_NULL) == {"source": "online", "provider": p.name, "clnsig": "pathogenic",
                                         "ids": ["rsTEST1"], "fetched": p.clinical(*RPGRIP1_NULL)["fetched"]}
    prov = p.provenance()
    assert prov["version"]["ensembl_data_release"] == 112 and prov["variants_asked"] == 2
    assert server.count(COMMON_PATH) == 1 and server.count("/info/data") == 1
    p.close()


def _vcf(tmp_path):
    return patient_vcf(tmp_path / "p.vcf", [(RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99"),
                                           (RPGRIP1_COMMON, COMMON_CSQ, "0/1:20,18:38:99")])


def test_triage_online_then_replay_gives_the_same_result(server, tmp_path):
    vcf = _vcf(tmp_path)
    cache = str(tmp_path / "online.sqlite")
    first = triage(vcf, hpo="HP:0000510", all_variants=True, online=True, online_url=server.url,
                   online_cache=cache)
    common = next(f for f in first["findings"] if f["pos"] == RPGRIP1_COMMON[1])
    crit = {c["code"]: c for c in common["criteria"]}
    assert crit["BA1"]["met"] is True and "gnomAD exomes via Ensembl REST" in crit["BA1"]["reason"]
    null = next(f for f in first["findings"] if f["pos"] == RPGRIP1_NULL[1])
    ncrit = {c["code"]: c for c in null["criteria"]}
    assert ncrit["PM2"]["met"] is None  # unknown to the service's frequencies: not taken as absent
    assert null["evidence"]["clinsig"] == "pathogenic" and null["evidence"]["clinsig_source"].startswith("online")
    sent = [w for w in first["warnings"] if w.startswith("online evidence is on")]
    assert sent and "no sample names or genotypes were sent" in sent[0] and server.url in sent[0]
    online = first["evidence_sources"]["online"]
    assert online["mode"] == "online" and online["cache"]["path"] == cache and online["requests"]["sent"] == 3
    hits = len(server.hits)

    replay = triage(vcf, hpo="HP:0000510", all_variants=True, offline_replay=True, online_url=server.url,
                    online_cache=cache)
    assert len(server.hits) == hits  # nothing sent
    strip = lambda r: [(f["key"], f["classification"], f["met_criteria"]) for f in r["findings"]]  # noqa: E731
    assert strip(replay) == strip(first)
    assert replay["evidence_sources"]["online"]["mode"] == "offline replay"
    assert any(w.startswith("offline replay: online evidence read only from the cache") for w in replay["warnings"])
    # only coordinates were sent: no sample name or genotype in any request
    for raw in server.raw:
        assert b"P1" not in raw and b"1/1" not in raw and b"0/1" not in raw


def test_triage_continues_when_the_server_fails(server, tmp_path):
    server.plan[COMMON_PATH] = [(503, {}, {"error": "down"})]
    r = triage(_vcf(tmp_path), hpo="HP:0000510", all_variants=True, online=True, online_url=server.url,
               online_cache=str(tmp_path / "c.sqlite"))
    common = next(f for f in r["findings"] if f["pos"] == RPGRIP1_COMMON[1])
    assert {c["code"]: c["met"] for c in common["criteria"]}["BA1"] is None
    assert any("HTTP 503 (server error) after 3 attempt(s)" in w for w in r["warnings"])


def test_cli_online_writes_cache_and_sources_into_result(server, tmp_path):
    import jsonschema

    from irdtriage.cli import main

    out = tmp_path / "out"
    cache = tmp_path / "cache.sqlite"
    assert main(["triage", _vcf(tmp_path), "--hpo", "HP:0000510", "--online", "--online-url", server.url,
                 "--cache", str(cache), "--out", str(out), "--formats", "json", "--quiet"]) == 0
    r = json.loads((out / "result.json").read_text())
    assert r["evidence_sources"]["online"]["cache"]["path"] == str(cache) and cache.is_file()
    schema = json.loads((ROOT / "irdtriage" / "schema" / "result.schema.json").read_text())
    jsonschema.validate(r, schema)
    assert any(w.startswith("online evidence is on") for w in r["warnings"])
    # option mistakes are one-line errors
    assert main(["triage", _vcf(tmp_path), "--cache", str(cache), "--out", str(tmp_path / "o2")]) == 2
    assert main(["triage", _vcf(tmp_path), "--online", "--offline-replay", "--out", str(tmp_path / "o3")]) == 2


AUDIT_HOOK = '''
import os, sys
_log = os.environ.get("IRDTRIAGE_TEST_CONNECT_LOG")
def _hook(event, args):
    if _log and event in ("socket.connect", "socket.getaddrinfo"):
        with open(_log, "a") as fh:
            fh.write(f"{event} {args!r}\\n")
sys.addaudithook(_hook)
'''


def test_without_online_nothing_opens_a_network_connection(tmp_path, server):
    """The CLI in a subprocess with an audit hook on socket.connect/getaddrinfo (sitecustomize)."""
    hook_dir = tmp_path / "hook"
    hook_dir.mkdir()
    (hook_dir / "sitecustomize.py").write_text(AUDIT_HOOK)
    log = tmp_path / "connect.log"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(hook_dir), str(ROOT)]),
               IRDTRIAGE_TEST_CONNECT_LOG=str(log), NO_COLOR="1")
    vcf = _vcf(tmp_path)
    run = lambda *extra: subprocess.run(  # noqa: E731
        [sys.executable, "-m", "irdtriage", "triage", vcf, "--hpo", "HP:0000510", "--quiet", *extra],
        env=env, capture_output=True, text=True, timeout=300)
    p = run("--out", str(tmp_path / "off"))
    assert p.returncode == 0, p.stderr
    assert not log.exists() or log.read_text() == ""
    # the hook does see connections: the same run with --online to the local server records them
    p = run("--out", str(tmp_path / "on"), "--online", "--online-url", server.url,
            "--cache", str(tmp_path / "c.sqlite"))
    assert p.returncode == 0, p.stderr
    assert "socket.connect" in log.read_text() and "127.0.0.1" in log.read_text()


def test_online_source_and_cache_appear_in_every_output(server, tmp_path):
    """The online provider, its data release and cache file reach the terminal header, the HTML
    run block, the findings VCF header and the TSV column naming each row's sources."""
    from test_bundle import _outputs

    cache = tmp_path / "online.sqlite"
    term, res, html, rows, header = _outputs(tmp_path, _vcf(tmp_path), "--hpo", "HP:0000510", "--all-variants",
                                             "--online", "--online-url", server.url, "--cache", str(cache))
    online = res["evidence_sources"]["online"]
    release = online["version"]["ensembl_data_release"]
    assert online["cache"]["path"] == str(cache) and release is not None
    flat = "".join(term.split())  # the terminal wraps long lines
    for text, want in ((flat, lambda x: "".join(x.split())), (html, str)):
        assert want(str(cache)) in text and want(server.url) in text and want(f"data release {release}") in text
    assert term.index("Evidence: online") < term.index("Gene hypotheses")
    assert any("ID=online" in h and f'Cache="{cache}"' in h and f'Version="data release {release}"' in h
               for h in header), header
    by_pos = {r["pos"]: r for r in rows}
    assert by_pos[str(RPGRIP1_COMMON[1])]["evidence_sources"].startswith("frequency: online Ensembl REST")
    assert "clinical significance: online Ensembl REST" in by_pos[str(RPGRIP1_NULL[1])]["evidence_sources"]
