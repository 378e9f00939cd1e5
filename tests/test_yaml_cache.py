"""The JSON cache of large bundled YAML files (irdtriage.yamlio.read_yaml_fast): a cache hit gives
the same data as parsing, and a validation error still names the file's line (read again from
the YAML when the data came from the cache). Common practice: a cache must never change results."""
from __future__ import annotations

import pytest

from irdtriage.errors import InputError
from irdtriage.transcripts import default_path, load_transcripts
from irdtriage.yamlio import read_yaml, read_yaml_fast


@pytest.fixture()
def cache(tmp_path, monkeypatch):
    monkeypatch.setenv("IRDTRIAGE_CACHE", str(tmp_path / "cache"))
    return tmp_path / "cache"


def test_cache_hit_equals_parse(cache):
    p = default_path()
    _, node1, first = read_yaml_fast(p, "transcript file")
    assert node1 is not None  # parsed: node kept for line numbers
    files = list((cache / "yaml").glob("*.json"))
    assert len(files) == 1
    _, node2, second = read_yaml_fast(p, "transcript file")
    assert node2 is None and second == first == read_yaml(p, "transcript file")[2]


def test_bundled_transcripts_same_from_cache(cache):
    a = load_transcripts()
    b = load_transcripts()  # second load reads the JSON cache
    assert a == b


def test_error_names_line_from_cache(cache, tmp_path):
    bad = tmp_path / "transcripts.yaml"
    bad.write_text("name: x\nversion: '1'\n\n\ntranscripts: not-a-list\n")
    msgs = []
    for _ in range(2):  # parse, then cache hit
        with pytest.raises(InputError) as e:
            load_transcripts(bad)
        msgs.append(str(e.value))
    assert msgs[0] == msgs[1] and ":5:" in msgs[0] and "transcripts must be a list" in msgs[0]


def test_corrupt_cache_is_ignored(cache):
    p = default_path()
    _, _, data = read_yaml_fast(p, "transcript file")
    (f,) = (cache / "yaml").glob("*.json")
    f.write_text("{not json")
    assert read_yaml_fast(p, "transcript file")[2] == data


def test_data_that_json_changes_is_not_cached(cache, tmp_path):
    y = tmp_path / "dated.yaml"
    y.write_text("when: 2026-12-02\n")  # YAML date -> datetime.date, not JSON
    _, _, data = read_yaml_fast(y, "x")
    assert not list(cache.rglob("*.json"))
    assert str(data["when"]) == "2026-12-02" and not isinstance(data["when"], str)


def test_panel_error_names_line_from_cache(cache, tmp_path):
    # A panel whose parsed form is in the cache still reports a bad value with its line.
    import shutil

    from irdtriage.panel import default_cascade_path, default_panel_path, load_panel

    text = default_panel_path().read_text(encoding="utf-8")
    line = next(i for i, ln in enumerate(text.splitlines(), 1) if "evidence_level: established" in ln)
    bad = tmp_path / "genes.yaml"
    bad.write_text(text.replace("evidence_level: established", "evidence_level: bogus", 1), encoding="utf-8")
    shutil.copy(default_cascade_path(), tmp_path / "cascade.yaml")
    msgs = []
    for _ in range(2):  # parse (and cache), then cache hit
        with pytest.raises(InputError) as e:
            load_panel(bad)
        msgs.append(str(e.value))
    assert list(cache.rglob("lines-*.json")), "the parsed panel is cached"
    assert msgs[0] == msgs[1] and f":{line}:" in msgs[0] and "bogus" in msgs[0]


def test_panel_same_from_cache(cache):
    from irdtriage.panel import load_panel

    assert load_panel() == load_panel()  # parse, then cache hit
