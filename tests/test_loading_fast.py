"""The loader's fast construction gives exactly what PyYAML's safe loader gives."""
from __future__ import annotations

import yaml
from hypothesis import given, settings
from hypothesis import strategies as st

from tests.conftest import DEMO
from tracker.loading import yamlread


def test_demo_files_identical_to_the_safe_loader():
    for path in DEMO.glob("*/*.yaml"):
        text = path.read_text(encoding="utf-8")
        assert yaml.load(text, Loader=yamlread._Loader) == yaml.safe_load(text), path


SCALARS = st.one_of(st.integers(-10**6, 10**6), st.floats(allow_nan=False, allow_infinity=False),
                    st.booleans(), st.none(), st.text(max_size=12),
                    st.sampled_from(["yes", "No", "on", "0x1f", "0o17", "1_000", "1:30", "~", "null", ".5",
                                     "1e3", "2.5e-2", "2026-12-01", "CU1", "'quoted'", "-", ""]))
DOCS = st.recursive(SCALARS, lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                     st.dictionaries(st.text(min_size=1, max_size=6), inner,
                                                                     max_size=4)), max_leaves=20)


@settings(max_examples=300, deadline=None)
@given(DOCS)
def test_random_documents_identical_to_the_safe_loader(doc):
    for style in (False, True, None):
        text = yaml.safe_dump({"root": doc}, default_flow_style=style)
        assert yaml.load(text, Loader=yamlread._Loader) == yaml.safe_load(text)


def test_anchors_and_merge_keys_still_work():
    text = "base: &b {kind: mcb, curve: B}\nother: {<<: *b, rating_a: 32}\nsame: *b\n"
    assert yaml.load(text, Loader=yamlread._Loader) == yaml.safe_load(text)


def test_plain_values_that_look_like_other_types():
    text = "a: 2026-12-01\nd: yes\ne: '7'\nf: 1e3\n"
    assert yaml.load(text, Loader=yamlread._Loader) == yaml.safe_load(text)
    # The number forms YAML 1.1 reads otherwise than people do are refused instead, saying so
    # (README, "Site files"): 1:30 would be 90, 0x10 16, 020 16, 2_0 20.
    for form in ("1:30", "0x10", "020", "2_0"):
        doc, errors = yamlread.parse(f"b: {form}\n", "f.yaml")
        assert doc is None and "plain decimal" in errors[0].message and errors[0].line == 1


def test_a_complex_key_is_a_clean_yaml_error(tmp_path):
    """Found by the fuzz test: '? name: x' makes a mapping a key, which no dict can hold."""
    text = "site:\n? name: \"Test flat\"\n"
    doc, errors = yamlread.parse(text, "flat-1/site.yaml")
    assert doc is None and len(errors) == 1 and errors[0].message.startswith("YAML:")
