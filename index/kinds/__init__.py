"""Every kind of query wordkin answers, by name: the one place that lists them.

Importing this module registers each kind (``kind_*`` modules) in ``query_base.KINDS``. Front ends look kinds up
here (``KINDS``, ``query_from_json``, ``result_from_json``) and never branch on a kind's name.
"""

from __future__ import annotations

from wordkin.index.kinds.arithmetic import Arithmetic, CalcResult
from wordkin.index.kinds.base import KINDS, Diff, Query, Result, Table, query_from_json, result_from_json
from wordkin.index.kinds.checkup import Checkup, CheckupResult
from wordkin.index.kinds.compare import Compare, CompareResult
from wordkin.index.kinds.neighbours import NeighbourResult, Neighbours
from wordkin.index.kinds.similarity import Similarity, SimilarityResult
from wordkin.index.kinds.terms import Candidate, TermsResult, TermSuggest

__all__ = [
    "KINDS",
    "Arithmetic",
    "Candidate",
    "Checkup",
    "CheckupResult",
    "Compare",
    "CompareResult",
    "CalcResult",
    "Diff",
    "NeighbourResult",
    "Neighbours",
    "Query",
    "Result",
    "Similarity",
    "SimilarityResult",
    "Table",
    "TermSuggest",
    "TermsResult",
    "query_from_json",
    "result_from_json",
]
