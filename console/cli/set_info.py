"""``wordkin prepare`` and ``wordkin info``: build a set's cache and index now, and say what they hold."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from wordkin.console.cli.io import emit_json, note, open_session, open_set
from wordkin.console.cli.registry import Command, register
from wordkin.console.formats.safe_text import visible
from wordkin.index.errors import UsageError
from wordkin.index.session import Session


def info_dict(session: Session) -> dict[str, Any]:
    vs = session.vectors
    idx = vs.meta.index
    state = session.state.value
    index: dict[str, Any] = {"state": state, "answering": session.answering()}
    if session.reason:
        index["reason"] = session.reason
    if idx.state == "ready":
        index.update(
            {
                "trees": idx.trees,
                "search_k": idx.search_k,
                # The index holds the unit vectors projected on this many principal axes (the set's own dimensions
                # for an index built before projections); this many candidates per query are re-ranked exactly.
                "projected_dims": idx.projected_dims or vs.dims,
                "candidates": idx.candidates or None,
                "index_bytes": sum(idx.file_bytes),
                # recall@10 of the index after the exact re-rank, with the most frequent words and with uniformly
                # drawn words as queries (a seeded sample of each); an index built by wordkin 0.1 measured only the
                # uniform sample ("frequent" is then null).
                "recall_at_10": {
                    "frequent": idx.recall_frequent or None,
                    "random": idx.recall_random or idx.recall_at_10,
                },
                "queries_missing_a_neighbour": idx.missing_share if idx.recall_frequent else None,
                "recall_sample": idx.recall_sample,
                "calc_search_k": idx.calc_search_k,
                # top-1 agreement of the index with an exact scan on b - a + c vectors (half of them of frequent
                # words); analogies use the index only with calc_search_k set.
                "calc_top1_agreement": idx.calc_top1_agreement,
            }
        )
    sub = vs.meta.subwords
    return {
        "words": vs.n,
        "dims": vs.dims,
        "format": vs.format,
        "subwords": None if sub is None else {"minn": sub.minn, "maxn": sub.maxn, "bucket": sub.bucket},
        "source": str(vs.source),
        "cache": str(vs.cache_dir) if vs.cache_dir else None,
        "index": index,
    }


def _mib(n: int) -> str:
    return f"{n / 2**20:,.1f} MiB"


def _print_info(d: dict[str, Any]) -> None:
    idx = d["index"]
    lines = [
        f"source   {visible(d['source'])}",
        f"format   {d['format']}",
        f"words    {d['words']:,}",
        f"dims     {d['dims']}",
        *(
            [
                f"subwords character {d['subwords']['minn']}- to {d['subwords']['maxn']}-grams in "
                f"{d['subwords']['bucket']:,} buckets: words not in the vocabulary get vectors"
            ]
            if d.get("subwords")
            else []
        ),
        f"cache    {visible(d['cache'] or 'off')}",
    ]
    if idx["state"] == "ready":
        r = idx["recall_at_10"]
        freq = "-" if r["frequent"] is None else f"{r['frequent']:.3f}"
        lines.append(
            f"index    ready: annoy, {idx['trees']} trees over {idx['projected_dims']} dims, search_k "
            f"{idx['search_k']}, {idx['candidates'] or 'k + 10'} candidates re-ranked, {_mib(idx['index_bytes'])}"
        )
        lines.append(
            f"recall   @10 against exact search: {freq} on the most frequent words, {r['random']:.3f} on random words"
        )
        if idx.get("queries_missing_a_neighbour") is not None:
            lines.append(
                f"         {100 * idx['queries_missing_a_neighbour']:.1f}% of sample queries lose a true neighbour"
            )
        agree = idx.get("calc_top1_agreement") or 0.0
        lines.append(
            f"analogy  index, search_k {idx['calc_search_k']} (top-1 agreement with exact search {agree:.3f})"
            if idx.get("calc_search_k")
            else f"analogy  exact search (the index agreed on {agree:.3f} of sample analogies; 1 in 600 may differ)"
        )
    elif idx["state"] == "rejected":
        lines.append(f"index    rejected: {visible(idx['reason'])} (`wordkin prepare` rebuilds it)")
    elif d["cache"]:
        lines.append(f"index    {idx['state']} (`wordkin prepare` builds it)")
    else:
        lines.append("index    none (no cache)")
    lines.append(f"queries  {visible(idx['answering'])}")
    sys.stdout.write("\n".join(lines) + "\n")


def cmd_info(args: argparse.Namespace) -> int:
    d = info_dict(open_session(args))
    emit_json(d) if args.json else _print_info(d)
    return 0


def cmd_prepare(args: argparse.Namespace) -> int:
    from wordkin.console.cli.progress_bar import stderr_progress
    from wordkin.index.ann.annoy_file import IndexState, load
    from wordkin.index.ann.build import build

    if args.trees is not None and not 1 <= args.trees <= 1000:
        raise UsageError(f"--trees must be between 1 and 1000, not {args.trees}")
    if args.no_cache:
        raise UsageError("prepare writes the cache; it cannot be used with --no-cache")
    vs = open_set(args)
    if vs.cache_note == "hit" and vs.cache_dir is not None:
        import datetime

        built = datetime.datetime.fromtimestamp((vs.cache_dir / "meta.json").stat().st_mtime).strftime("%Y-%m-%d %H:%M")
        note(f"cache ready (built {built})")
    else:
        note(f"cache {vs.cache_note} ({vs.meta.parse_seconds} s to parse)")
    loaded = load(vs)
    if loaded.state is IndexState.REJECTED:
        note(f"the cached index was rejected ({loaded.reason}); rebuilding it")
    with stderr_progress() as report:
        index = build(vs, n_trees=args.trees, progress=report)
    _print_info(info_dict(Session(vs, index, IndexState.READY)))
    idx = vs.meta.index
    sys.stdout.write(f"built    in {idx.build_seconds} s; p50 query {idx.query_ms_p50} ms\n")
    return 0


def _prepare_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file")
    p.add_argument("--trees", type=int, metavar="N", help="annoy trees (default chosen by set size)")


def _info_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file")
    p.add_argument("--json", action="store_true")


register(
    Command("prepare", "build the cache and the index now, then print a summary", cmd_prepare, _prepare_arguments, 20)
)
register(Command("info", "words, dims, format, cache and index state", cmd_info, _info_arguments, 21))
