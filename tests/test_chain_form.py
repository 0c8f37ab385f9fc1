"""The chain's own writer of canonical JSON (store/chain.py `_canonical`) against the records'
canonical form, which is Python's json.dumps with sorted keys and compact separators
(source: docs/sources.md "The chain's canonical JSON")."""

from __future__ import annotations

import json

from hypothesis import given
from hypothesis import strategies as st

from trapbook.records import canonical_json
from trapbook.store import chain

_VALUES = st.one_of(st.text(), st.none(), st.integers(), st.booleans(), st.floats(allow_nan=False), st.lists(st.integers()))


@given(st.dictionaries(st.text(), _VALUES, max_size=10))
def test_the_chain_writes_exactly_the_canonical_json(obj):
    assert chain._canonical(obj) == canonical_json(obj)
    assert canonical_json(obj) == json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False)


def test_a_version_hash_is_the_sha256_of_that_text():
    """Source: docs/sources.md "The chain's canonical JSON": hashlib SHA-256 over json.dumps of the link's fields."""
    import hashlib

    fields = dict(run="TB-0001", version=2, author="Ö. Ñ", time="2026-12-02T10:00:00+00:00", reason='fixed \\ "q"', action="edit")
    data = '{"title":"x"}'
    want = {**fields, "prev": None, "data_sha256": hashlib.sha256(data.encode()).hexdigest()}
    expected = hashlib.sha256(json.dumps(want, sort_keys=True, separators=(",", ":"), ensure_ascii=False).encode()).hexdigest()
    assert (
        chain.version_hash(fields["run"], 2, fields["author"], fields["time"], fields["reason"], "edit", None, data) == expected
    )
