"""Entries as wordkin 0.1 stored them (notebook schema 1, JSON export version 1): a query dict, a params dict and a
result dict per kind. ``upgrade_v1`` turns one into today's query value and result, for the notebook migration
and for importing an old export. Options that version did not record take their defaults."""

from __future__ import annotations

from typing import Any


def upgrade_v1(
    kind: str, query: dict[str, Any], params: dict[str, Any], result: dict[str, Any]
) -> tuple[dict[str, Any], dict[str, Any]]:
    """``(query JSON, result JSON)`` of today's layout for a version-1 entry; ``ValueError`` for an unknown kind."""
    mode = str(params.get("mode", "exact"))
    if kind == "neighbours":
        q = {
            "kind": kind,
            "word": query["word"],
            "k": params.get("k", 10),
            "top": params.get("top"),
            "exact": mode == "exact",
        }
        r = {"word": query["word"], "k": params.get("k", 10), "mode": mode, "results": result.get("rows", [])}
        return q, r
    if kind == "arithmetic":
        q = {
            "kind": kind,
            "expression": query["expression"],
            "k": params.get("k", 10),
            "method": params.get("method", "add"),
            "top": params.get("top"),
            "keep_inputs": bool(params.get("keep_inputs", False)),
            "exact": mode == "exact",
        }
        r = {
            "expression": query["expression"],
            "k": params.get("k", 10),
            "mode": mode,
            "excluded": result.get("excluded", []),
            "results": result.get("rows", []),
        }
        if result.get("target"):
            r["target"] = result["target"]
        return q, r
    if kind == "similarity":
        q = {"kind": kind, "words": list(query["words"])}
        r = dict(result)
        r["words"] = list(query["words"])
        return q, r
    raise ValueError(f"unknown entry kind {kind!r}")
