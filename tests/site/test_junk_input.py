"""Hypothesis junk in every site file: the tool answers with exit status 2, never a traceback or a file.

The site is the three-bus chain of tests/site/helpers.py split over the files a facility uses (facility.yaml,
sources.yaml, buses.csv, cables.csv). Each example replaces one file with junk (text, bytes, numbers, nested
YAML) or one value of one item with a junk value.
"""

from __future__ import annotations

import copy
import tempfile
from pathlib import Path

import yaml
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from arcflash.cli import main
from tests.site.helpers import CHAIN

BUSES_CSV = "id,nominal_kv,equipment_class\nMV,13.8,switchgear-15kv\nLV,0.48,switchgear-lv\nEND,0.48,panelboard-deep\n"
CABLES_CSV = "id,from_bus,to_bus,length,size,material,conduit\nC,LV,END,200 ft,4/0,copper,steel\n"


def _documents():
    rest = {k: v for k, v in CHAIN.items() if k not in ("facility", "buses", "cables")}
    return {"facility.yaml": {"facility": CHAIN["facility"]}, "sources.yaml": rest}


def _write(folder, replace=None):
    files = {name: yaml.safe_dump(doc, sort_keys=False) for name, doc in _documents().items()}
    files.update({"buses.csv": BUSES_CSV, "cables.csv": CABLES_CSV})
    files.update(replace or {})
    for name, content in files.items():
        (folder / name).write_bytes(content if isinstance(content, bytes) else content.encode("utf-8", "surrogatepass"))


def _run(folder):
    out = folder.parent / "faults.csv"
    result = CliRunner().invoke(main, ["faults", str(folder), "--csv", str(out)])
    return result, out


def _answered(result, out, may_run=False):
    """Exit 2 with a message (or 0 where the junk happens to be valid), no traceback, no file on a refusal."""
    assert result.exit_code in ((0, 2) if may_run else (2,)), (result.exit_code, result.output, result.exception)
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert "Traceback" not in result.output
    if result.exit_code == 2:
        assert "expected" in result.output
        assert not out.exists()


SCALARS = st.one_of(st.none(), st.booleans(), st.integers(), st.floats(), st.text(max_size=30))
NESTED = st.recursive(SCALARS, lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                       st.dictionaries(st.text(max_size=8), inner, max_size=4)),
                      max_leaves=12)
JUNK_FILES = st.one_of(
    st.text(max_size=200),
    st.binary(max_size=200),
    NESTED.map(lambda value: yaml.safe_dump(value)),
    st.lists(st.lists(st.text(alphabet=st.characters(blacklist_characters="\r\n"), max_size=8), max_size=5),
             max_size=5).map(lambda rows: "\n".join(",".join(row) for row in rows)),
)
FILES = ["facility.yaml", "sources.yaml", "buses.csv", "cables.csv"]


def test_the_split_chain_is_a_valid_site(tmp_path):
    folder = tmp_path / "site"
    folder.mkdir()
    _write(folder)
    result, out = _run(folder)
    assert result.exit_code == 0, result.output
    assert out.exists()


@settings(suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=st.sampled_from(FILES), junk=JUNK_FILES)
def test_a_file_replaced_by_junk_is_refused_cleanly(name, junk):
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch) / "site"
        folder.mkdir()
        _write(folder, {name: junk})
        result, out = _run(folder)
        # the facility file or the sources replaced: no facility or no source; a CSV: no buses or a cable lost
        _answered(result, out)


@given(section=st.sampled_from(["utilities", "transformers", "devices"]), data=st.data(), junk=NESTED)
def test_a_value_replaced_by_junk_is_refused_or_valid(section, data, junk):
    document = copy.deepcopy(_documents()["sources.yaml"])
    item = document[section][0]
    key = data.draw(st.sampled_from(sorted(item)))
    item[key] = junk
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch) / "site"
        folder.mkdir()
        _write(folder, {"sources.yaml": yaml.safe_dump(document, sort_keys=False)})
        result, out = _run(folder)
        _answered(result, out, may_run=True)
