"""Optional online evidence (off by default): population frequencies and clinical assertions
for one variant from a public HTTP API, fetched once and kept in a persistent cache.

Only variant coordinates leave the machine (chromosome, position, reference and alternate
allele), never a sample name or a genotype; the run's warnings say so, naming the server.

Pieces:

* ``HttpClient``: GET with a ``requests-cache`` SQLite store (expiry in days), a timeout,
  bounded retries on HTTP 429 (waiting ``Retry-After`` seconds, at most ``max_wait``) and on
  502/503/504, and an offline replay mode that answers only from the cache (any attempt to
  reach the network raises inside the client and becomes "not in the cache").  A failed
  request is a warning; the run continues without that evidence.  After a connection error
  or timeout the client stops asking (the server is taken as unreachable for this run).
* ``OnlineProvider``: the interface a source implements (``population``, ``clinical``,
  ``provenance``).
* ``EnsemblRegionRest``: the provider for Ensembl's REST API, region consequence endpoint, ``GET /vep/human/region/{chrom}:{start}-{end}:1/{allele}`` with
  ``af_gnomade=1&af_gnomadg=1`` (documented at rest.ensembl.org/documentation/info/vep_region_get).
  Only the ``colocated_variants`` block of the answer is read: ``frequencies`` (allele ->
  ``gnomade``/``gnomadg`` and their ``_<group>`` keys) and ``clin_sig_allele``
  (``A:pathogenic;G:benign``).  The server's data release comes from ``GET /info/data``.

What online answers may do: a frequency drives BA1/BS1/PM2 like a local one, without allele
counts (no filtering AF).  A variant the service does not know is *not* taken as absent from
the population (no PM2 from silence).  A clinical assertion is recorded as evidence beside the
finding (``clinsig``) and never becomes PS1/PM5/PP5 by itself.

``requests`` and ``requests-cache`` are imported only when an online source is used.
"""
from __future__ import annotations

import datetime as _dt
import os
import time
from dataclasses import dataclass, field
from typing import Any, Optional, Protocol
from urllib.parse import quote

from ..errors import InputError
from .alleles import bare, trim

DEFAULT_EXPIRE_DAYS = 30
DEFAULT_TIMEOUT = 20.0  # seconds for connect and for read
DEFAULT_RETRIES = 2  # further attempts after a 429 or 502/503/504
DEFAULT_MAX_WAIT = 30.0  # the longest Retry-After the client waits for
MIN_INTERVAL = 1.0 / 15  # Ensembl asks clients to stay at or below 15 requests a second
RETRY_STATUSES = (502, 503, 504)

DEFAULT_SERVERS = {"GRCh38": "https://rest.ensembl.org", "GRCh37": "https://grch37.rest.ensembl.org"}

# gnomAD groups left out of the group maximum (bottlenecked or mixed groups), as gnomAD's own
# grpmax/popmax does (Karczewski et al. 2020; gnomAD v4 help pages, from memory).
NOT_IN_GROUP_MAX = frozenset({"asj", "fin", "oth", "remaining", "mid", "ami"})


def default_cache_path() -> str:
    """Per-user cache file: $XDG_CACHE_HOME/irdtriage/online.sqlite (~/.cache when unset)."""
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return os.path.join(base, "irdtriage", "online.sqlite")


class OfflineReplayMiss(Exception):
    """Raised by the no-network adapter in offline replay mode."""


@dataclass
class Answer:
    """One GET's outcome: JSON (or None), whether it came from the cache, and when it was fetched."""

    data: Any = None
    from_cache: bool = False
    fetched: Optional[str] = None
    status: Optional[int] = None
    problem: Optional[str] = None


@dataclass
class HttpClient:
    base_url: str
    cache_path: str
    expire_days: float = DEFAULT_EXPIRE_DAYS
    offline_replay: bool = False
    timeout: float = DEFAULT_TIMEOUT
    retries: int = DEFAULT_RETRIES
    max_wait: float = DEFAULT_MAX_WAIT
    min_interval: float = MIN_INTERVAL
    warnings: list[str] = field(default_factory=list)
    counts: dict[str, int] = field(default_factory=lambda: {"sent": 0, "from_cache": 0, "failed": 0,
                                                            "not_in_cache": 0, "retried": 0})
    unreachable: bool = False
    _session: Any = None
    _last: float = 0.0

    def __post_init__(self):
        self.base_url = self.base_url.rstrip("/")
        try:
            import requests  # noqa: F401
            import requests_cache
        except ImportError as e:  # pragma: no cover - both are dependencies of the package
            raise InputError(f"online evidence needs the 'requests' and 'requests-cache' packages ({e})") from None
        folder = os.path.dirname(os.path.abspath(self.cache_path))
        if self.offline_replay and not os.path.isfile(self.cache_path):
            raise InputError("--offline-replay: the cache file does not exist (run once with --online first)",
                             self.cache_path)
        try:
            os.makedirs(folder, exist_ok=True)
        except OSError as e:
            raise InputError(f"cannot create the cache folder: {e.strerror}", folder) from None
        self._session = requests_cache.CachedSession(
            self.cache_path, backend="sqlite", expire_after=_dt.timedelta(days=self.expire_days),
            allowable_methods=("GET",), allowable_codes=(200,),
            # replay answers with whatever the cache holds, expired or not
            stale_if_error=self.offline_replay)
        if self.offline_replay:
            import requests.adapters

            class _NoNetwork(requests.adapters.BaseAdapter):
                def send(self, request, **kwargs):
                    raise OfflineReplayMiss(request.url)

                def close(self):
                    pass

            self._session.mount("http://", _NoNetwork())
            self._session.mount("https://", _NoNetwork())

    def close(self) -> None:
        if self._session is not None:
            self._session.close()

    def _wait_turn(self) -> None:
        gap = time.monotonic() - self._last
        if gap < self.min_interval:
            time.sleep(self.min_interval - gap)
        self._last = time.monotonic()

    def get_json(self, path: str, params: Optional[dict[str, Any]] = None) -> Answer:
        import requests

        url = f"{self.base_url}/{path.lstrip('/')}"
        if self.unreachable:
            return Answer(problem="server unreachable earlier in this run")
        headers = {"Accept": "application/json"}
        attempt = 0
        while True:
            try:
                if self.offline_replay:
                    # replay: whatever the cache holds, expired or not; never the network
                    resp = self._session.get(url, params=params, headers=headers, only_if_cached=True)
                else:
                    if not self._cached(url, params, headers):
                        self._wait_turn()
                    resp = self._session.get(url, params=params, headers=headers, timeout=self.timeout)
            except OfflineReplayMiss:
                self.counts["not_in_cache"] += 1
                return Answer(problem="not in the cache (offline replay)")
            except (requests.Timeout, requests.ConnectionError) as e:
                self.counts["failed"] += 1
                self.unreachable = True
                kind = "timed out" if isinstance(e, requests.Timeout) else "could not connect"
                self._warn(f"online evidence: {self.base_url} {kind}; the run continues without online evidence")
                return Answer(problem=kind)
            except requests.RequestException as e:
                self.counts["failed"] += 1
                self._warn(f"online evidence: request to {self.base_url} failed ({type(e).__name__}); "
                           "the run continues without that evidence")
                return Answer(problem=type(e).__name__)
            from_cache = bool(getattr(resp, "from_cache", False))
            if self.offline_replay and resp.status_code != 200:  # requests-cache's 504: not cached
                self.counts["not_in_cache"] += 1
                return Answer(problem="not in the cache (offline replay)")
            if not from_cache:
                self.counts["sent"] += 1
            if resp.status_code == 200:
                if from_cache:
                    self.counts["from_cache"] += 1
                try:
                    data = resp.json()
                except ValueError:
                    self.counts["failed"] += 1
                    self._warn(f"online evidence: {self.base_url} answered with something that is not JSON; "
                               "that evidence is left out")
                    return Answer(status=200, problem="not JSON")
                created = getattr(resp, "created_at", None)
                fetched = (created.astimezone(_dt.timezone.utc) if created else _dt.datetime.now(_dt.timezone.utc))
                return Answer(data=data, from_cache=from_cache, status=200,
                              fetched=fetched.replace(microsecond=0).isoformat().replace("+00:00", "Z"))
            if resp.status_code in (429, *RETRY_STATUSES) and attempt < self.retries:
                wait = _retry_after(resp.headers.get("Retry-After"), default=1.0 * (attempt + 1))
                if wait > self.max_wait:
                    self.counts["failed"] += 1
                    self._warn(f"online evidence: {self.base_url} asked to wait {wait:g} s (HTTP "
                               f"{resp.status_code}); not waiting that long, the run continues without that evidence")
                    return Answer(status=resp.status_code, problem="rate limited")
                attempt += 1
                self.counts["retried"] += 1
                time.sleep(wait)
                continue
            if resp.status_code == 400:
                # the service does not know this allele/region (documented 400 for bad input)
                return Answer(status=400, problem="the service rejected the query (HTTP 400)")
            self.counts["failed"] += 1
            what = "rate limit" if resp.status_code == 429 else "server error" if resp.status_code >= 500 else "error"
            self._warn(f"online evidence: {self.base_url} answered HTTP {resp.status_code} ({what}) "
                       f"after {attempt + 1} attempt(s); the run continues without that evidence")
            return Answer(status=resp.status_code, problem=f"HTTP {resp.status_code}")

    def _cached(self, url, params, headers) -> bool:
        """Is a fresh answer in the cache? (then no need to pace the request)"""
        try:
            import requests

            req = self._session.prepare_request(requests.Request("GET", url, params=params, headers=headers))
            return bool(self._session.cache.contains(request=req))
        except Exception:  # pragma: no cover - a cache probe never decides anything
            return False

    def _warn(self, text: str) -> None:
        if text not in self.warnings:
            self.warnings.append(text)


def _retry_after(value: Optional[str], default: float) -> float:
    """Seconds from a Retry-After header: a number (Ensembl sends a float) or an HTTP date."""
    if not value:
        return default
    try:
        return max(0.0, float(value))
    except ValueError:
        pass
    from email.utils import parsedate_to_datetime

    try:
        when = parsedate_to_datetime(value)
        return max(0.0, (when - _dt.datetime.now(when.tzinfo)).total_seconds())
    except (TypeError, ValueError):
        return default


# ---------------------------------------------------------------------------------------

class OnlineProvider(Protocol):
    """A public source asked for what the local evidence lacks; only coordinates are sent."""

    name: str
    warnings: list[str]

    def population(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[dict[str, Any]]:
        """A population record in the shape of popfreq.PopulationSource.lookup, or None when unknown."""

    def clinical(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[dict[str, Any]]:
        """{"clnsig": text, "ids": [...], "source": name} for this exact allele, or None."""

    def provenance(self) -> dict[str, Any]:
        """Server, version/date, cache location and request counts for result.json."""

    def close(self) -> None:
        ...


def region_and_allele(chrom: str, pos: int, ref: str, alt: str) -> tuple[str, str]:
    """Ensembl region notation for one allele: ``chrom:start-end:1`` and the allele (``-`` for a
    deletion; an insertion has end = start - 1), after trimming the bases REF and ALT share
    (Ensembl REST region/allele convention, from memory)."""
    p, r, a = trim(pos, ref, alt)
    c = bare(chrom)
    if not r:  # insertion between p-1 and p
        return f"{c}:{p}-{p - 1}:1", a
    return f"{c}:{p}-{p + len(r) - 1}:1", (a or "-")


class EnsemblRegionRest:
    name = "Ensembl REST (region consequence endpoint)"

    def __init__(self, client: HttpClient, build: Optional[str]):
        self.client = client
        self.build = build
        self._memo: dict[tuple, Optional[dict]] = {}
        self._release: Optional[Any] = None
        self._release_fetched: Optional[str] = None
        self.variants_asked = 0

    @property
    def warnings(self) -> list[str]:
        return self.client.warnings

    def close(self) -> None:
        self.client.close()

    def _record(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[dict]:
        key = (bare(chrom), pos, ref.upper(), alt.upper())
        if key in self._memo:
            return self._memo[key]
        if self._release is None:
            info = self.client.get_json("info/data", {"content-type": "application/json"})
            if isinstance(info.data, dict):
                rel = info.data.get("releases")
                self._release = rel[0] if isinstance(rel, list) and len(rel) == 1 else rel
                self._release_fetched = info.fetched
            else:
                self._release = "unknown"
        region, allele = region_and_allele(chrom, pos, ref, alt)
        self.variants_asked += 1
        ans = self.client.get_json(f"vep/human/region/{quote(region, safe=':-')}/{quote(allele, safe='-')}",
                                   {"af_gnomade": 1, "af_gnomadg": 1, "content-type": "application/json"})
        rec = None
        if isinstance(ans.data, list) and ans.data and isinstance(ans.data[0], dict):
            rec = {"answer": ans.data[0], "fetched": ans.fetched, "from_cache": ans.from_cache,
                   "allele": allele, "start": trim(pos, ref, alt)[0]}
        self._memo[key] = rec
        return rec

    def _colocated(self, rec: dict) -> list[dict]:
        out = []
        for cv in rec["answer"].get("colocated_variants") or []:
            if isinstance(cv, dict) and cv.get("start") in (None, rec["start"]):
                out.append(cv)
        return out

    def population(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[dict[str, Any]]:
        rec = self._record(chrom, pos, ref, alt)
        if rec is None:
            return None
        allele = rec["allele"]
        for cv in self._colocated(rec):
            freqs = (cv.get("frequencies") or {}).get(allele)
            if not isinstance(freqs, dict):
                continue
            for dataset, label in (("gnomade", "gnomAD exomes"), ("gnomadg", "gnomAD genomes")):
                af = _number(freqs.get(dataset))
                groups = {k[len(dataset) + 1:]: _number(v) for k, v in freqs.items()
                          if k.startswith(dataset + "_") and _number(v) is not None}
                if af is None and not groups:
                    continue
                in_max = {g: v for g, v in groups.items() if g not in NOT_IN_GROUP_MAX}
                top = max(in_max, key=in_max.get) if in_max else None
                return {
                    "source": "online", "provider": self.name, "dataset": label, "id": cv.get("id"),
                    "found": True, "af": af, "ac": None, "an": None, "nhomalt": None,
                    "populations": {g: {"ac": None, "an": None, "af": v, "nhomalt": None, "faf95": None}
                                    for g, v in groups.items()},
                    "popmax_af": in_max[top] if top else None, "popmax_population": top,
                    "faf95": None, "faf95_population": None, "fetched": rec["fetched"],
                    "note": f"{label} frequency from {self.name} (allele counts not given: no filtering AF)",
                }
        return None  # not known to the service: never taken as absent from the population

    def clinical(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[dict[str, Any]]:
        rec = self._record(chrom, pos, ref, alt)
        if rec is None:
            return None
        allele = rec["allele"]
        sigs, ids = [], []
        for cv in self._colocated(rec):
            for part in str(cv.get("clin_sig_allele") or "").split(";"):
                a, _, sig = part.partition(":")
                if a.strip().upper() == allele.upper() and sig.strip():
                    sigs.append(sig.strip())
                    if cv.get("id"):
                        ids.append(str(cv["id"]))
        if not sigs:
            return None
        return {"source": "online", "provider": self.name, "clnsig": "|".join(dict.fromkeys(sigs)),
                "ids": list(dict.fromkeys(ids)), "fetched": rec["fetched"]}

    def provenance(self) -> dict[str, Any]:
        c = self.client
        fetched = sorted({r["fetched"] for r in self._memo.values() if r and r.get("fetched")})
        return {
            "provider": self.name, "url": c.base_url, "genome_build": self.build,
            "version": {"ensembl_data_release": self._release, "fetched": self._release_fetched},
            "fetched_from": fetched[0] if fetched else None, "fetched_to": fetched[-1] if fetched else None,
            "mode": "offline replay" if c.offline_replay else "online",
            "cache": {"path": os.path.abspath(c.cache_path), "expire_days": c.expire_days},
            "variants_asked": self.variants_asked, "requests": dict(c.counts),
            "sent": "variant coordinates only (chromosome, position, reference and alternate allele); "
                    "no sample names or genotypes",
        }


def _number(v: Any) -> Optional[float]:
    try:
        return float(v) if v is not None and v != "" else None
    except (TypeError, ValueError):
        return None


def open_provider(build: Optional[str], *, url: Optional[str] = None, cache_path: Optional[str] = None,
                  expire_days: float = DEFAULT_EXPIRE_DAYS, offline_replay: bool = False,
                  timeout: float = DEFAULT_TIMEOUT, retries: int = DEFAULT_RETRIES,
                  max_wait: float = DEFAULT_MAX_WAIT, min_interval: float = MIN_INTERVAL) -> EnsemblRegionRest:
    """The online provider for this build (Ensembl's GRCh38 or GRCh37 server unless ``url``)."""
    if url is None:
        if build not in DEFAULT_SERVERS:
            raise InputError("online evidence needs the genome build (GRCh37 or GRCh38): give --build")
        url = DEFAULT_SERVERS[build]
    if not url.startswith(("http://", "https://")):
        raise InputError(f"--online-url must start with http:// or https://, got {url!r}")
    client = HttpClient(url, cache_path or default_cache_path(), expire_days=expire_days,
                        offline_replay=offline_replay, timeout=timeout, retries=retries, max_wait=max_wait,
                        min_interval=min_interval)
    return EnsemblRegionRest(client, build)


def disclosure(provider: EnsemblRegionRest) -> str:
    """The run's statement of what left the machine (a warning every output shows)."""
    c = provider.client
    if c.offline_replay:
        return (f"offline replay: online evidence read only from the cache {os.path.abspath(c.cache_path)}; "
                "nothing was sent over the network")
    sent = c.counts["sent"]
    return (f"online evidence is on: variant coordinates (chromosome, position, reference and alternate allele) "
            f"of {provider.variants_asked} variant(s) were looked up at {c.base_url} ({sent} request(s) sent, "
            f"{c.counts['from_cache']} answered from the cache {os.path.abspath(c.cache_path)}); no sample names "
            "or genotypes were sent")
