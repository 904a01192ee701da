"""Every kind of query wordkin answers, by name: the one place that lists them.

Importing this module registers each kind (``kind_*`` modules) in ``query_base.KINDS``. Front ends look kinds up
here (``KINDS``, ``query_from_json``, ``result_from_json``) and never branch on a kind's name.
"""

from __future__ import annotations

from .kind_arithmetic import Arithmetic, CalcResult
from .kind_checkup import Checkup, CheckupResult
from .kind_compare import Compare, CompareResult
from .kind_neighbours import NeighbourResult, Neighbours
from .kind_similarity import Similarity, SimilarityResult
from .kind_terms import Candidate, TermsResult, TermSuggest
from .query_base import KINDS, Diff, Query, Result, Table, query_from_json, result_from_json

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
