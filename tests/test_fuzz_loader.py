"""Fuzzed case loader: any input gives a case or a CaseError, never another exception.

Property (the rule for bad input, DEVELOPERS "Conventions": bad input raises
``CaseError`` where it is read or placed, never a traceback):

* documents: ``geometry.case.parse_case(doc, path)`` followed by
  ``geometry.layout.place`` of every arrangement returns normally or raises
  :class:`~geometry.errors.CaseError`;
* text: ``geometry.case.load_case(file)`` of any text or bytes returns a
  ``Case`` or raises ``CaseError``.

Stricter than that, a numerical warning on the way (an overflow, a NaN) fails
too, and a document or text that loads must pass ``racfield check`` (status 0):
a case that loads but breaks the check is bad input that reached a traceback.

The documents come from a small grammar of the real keys (``valid_docs``:
windows, windings, layers of round, rectangular, foil and litz conductors,
explicit conductors, frequency lists and log sweeps, waveforms, cores and
gaps, parallel conductors, variants; quantities as SI numbers or as strings
with units) and from mutations of them (``mutated_docs``: a key dropped or
renamed, a value replaced by a JSON-like value of another type, a negative,
zero, huge, NaN or infinite number, an odd unit string or random text).  The
text property renders such documents as TOML and mutates the text (cuts,
inserted TOML punctuation, random characters and bytes).

Examples: 250 + 450 + 200 + 200 + 100 = 1200 in the five property tests of
the normal run (plus 100 grammar documents that must hold valid cases), with
``derandomize=True`` (the same examples on every run, so CI is reproducible)
and no example database.  Set the environment variable
``RACFIELD_FUZZ_EXAMPLES=N`` to run N examples in each of the five property
tests instead, for a longer search::

    RACFIELD_FUZZ_EXAMPLES=20000 python -m pytest tests/test_fuzz_loader.py

The examples stay derandomized; a larger N explores further.  Outcome counts
(case, CaseError, mutation kinds): ``pytest --hypothesis-show-statistics``.

The grammar and the mutations are in ``tests/fuzz_grammar.py``.
"""

from __future__ import annotations

import contextlib
import io
import os
import warnings
from pathlib import Path

from hypothesis import HealthCheck, event, given, settings, strategies as st

from fuzz_grammar import CASE_PATH, FOLDER, mutated_docs, mutated_text, to_toml, valid_docs
from racfield.geometry.case import Case, parse_case, variant_cases

from racfield.geometry.load import load_case
from racfield.geometry.case.errors import CaseError
from racfield.geometry.layout import place
from racfield.cli import main

DEFAULT_EXAMPLES = {"valid": 250, "mutated": 450, "text": 200, "text-mutated": 200, "bytes": 100}


def examples(name: str) -> int:
    """Examples of one property test: RACFIELD_FUZZ_EXAMPLES when set, else the default."""
    given_n = os.environ.get("RACFIELD_FUZZ_EXAMPLES", "").strip()
    return int(given_n) if given_n else DEFAULT_EXAMPLES[name]


def fuzz_settings(name: str) -> settings:
    return settings(max_examples=examples(name), deadline=None, derandomize=True, database=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                           HealthCheck.filter_too_much])


# ---------------------------------------------------------------------------
# the properties


def _outcome(make, text=None) -> str:
    """Run ``make()``: 'case' or 'CaseError'; any other exception, or a numerical
    warning (a NaN or an overflow on the way), fails the test.  When a case
    loads, ``racfield check`` of its text (``text()``) must succeed too: a case
    that loads but breaks the check is bad input that reached a traceback."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            make()
    except CaseError as error:
        line = str(error)
        assert "\n" not in line and "\r" not in line, repr(line)
        return "CaseError"
    if text is not None:
        path = FOLDER / "checked.toml"
        data = text()
        path.write_bytes(data if isinstance(data, bytes) else data.encode("utf-8", "surrogatepass"))
        out, err = io.StringIO(), io.StringIO()
        with warnings.catch_warnings(), contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            warnings.simplefilter("error")
            status = main(["check", str(path)])
        assert status == 0 and "case is valid" in out.getvalue(), err.getvalue()
    return "case"


def parse_and_place(doc: dict, allow_outside_files: bool = False) -> Case:
    case = parse_case(doc, CASE_PATH, allow_outside_files=allow_outside_files)
    for arrangement in variant_cases(case):
        place(arrangement)
    return case


def load_text(data: str | bytes) -> Case:
    path = Path(CASE_PATH)
    path.write_bytes(data if isinstance(data, bytes) else data.encode("utf-8", "surrogatepass"))
    return load_case(path)


@fuzz_settings("valid")
@given(valid_docs(), st.booleans())
def test_grammar_documents_give_a_case_or_a_case_error(doc, allow):
    event(_outcome(lambda: parse_and_place(doc, allow), None if allow else lambda: to_toml(doc)))


@fuzz_settings("mutated")
@given(mutated_docs())
def test_mutated_documents_give_a_case_or_a_case_error(doc):
    event(_outcome(lambda: parse_and_place(doc), lambda: to_toml(doc)))


@fuzz_settings("text")
@given(st.one_of(valid_docs(), mutated_docs()).map(to_toml))
def test_toml_text_gives_a_case_or_a_case_error(text):
    event(_outcome(lambda: load_text(text), lambda: text))


@fuzz_settings("text-mutated")
@given(st.one_of(mutated_text(), st.text(max_size=200)))
def test_mutated_toml_text_gives_a_case_or_a_case_error(text):
    event(_outcome(lambda: load_text(text), lambda: text))


@st.composite
def spliced_bytes(draw) -> bytes:
    """A grammar document's TOML with a few random bytes (often not UTF-8) spliced in."""
    data = to_toml(draw(valid_docs())).encode("utf-8")
    at = draw(st.integers(0, len(data)))
    return data[:at] + draw(st.binary(min_size=1, max_size=8)) + data[at:]


@fuzz_settings("bytes")
@given(st.one_of(st.binary(max_size=300), spliced_bytes()))
def test_bytes_give_a_case_or_a_case_error(data):
    event(_outcome(lambda: load_text(data), lambda: data))


def test_the_grammar_produces_valid_cases():
    # the grammar is worth its name: in a fixed sample of its documents at least a fifth
    # are cases that load and place (else the fuzzer would test the first checks only)
    outcomes = []

    @settings(max_examples=100, deadline=None, derandomize=True, database=None,
              suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
    @given(valid_docs())
    def sample(doc):
        try:
            parse_and_place(doc)
            outcomes.append(True)
        except CaseError:
            outcomes.append(False)

    sample()
    assert len(outcomes) >= 50 and sum(outcomes) >= 0.2 * len(outcomes), (len(outcomes), sum(outcomes))
