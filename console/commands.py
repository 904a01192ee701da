"""One function per ``wordkin`` subcommand. Each takes the parsed arguments and returns the exit code."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from index.expr import ExprError

from .cli import emit_json, open_set, warn
from .render import neighbour_table
from .safe_text import visible


def _ann_for(vs: Any, exact: bool) -> Any:
    if exact:
        return None
    from index.ann import load

    return load(vs)


def cmd_near(args: argparse.Namespace) -> int:
    from index.search import neighbours

    vs = open_set(args)
    res = neighbours(
        vs,
        args.word,
        args.k,
        ann=_ann_for(vs, args.exact),
        mode="exact" if args.exact else "auto",
        top=args.top,
    )
    if args.json:
        emit_json(res.to_json())
    else:
        sys.stdout.write(neighbour_table(res.results, title=f"neighbours of {res.query} ({res.mode})"))
    _maybe_save(args, vs, res)
    return 0


def cmd_calc(args: argparse.Namespace) -> int:
    from index.analogy import calc

    from .render import calc_text

    vs = open_set(args)
    try:
        res = calc(
            vs,
            args.expr,
            args.k,
            method=args.method,
            top=args.top,
            keep_inputs=args.keep_inputs,
            ann=_ann_for(vs, args.exact),
            mode="exact" if args.exact else "auto",
        )
    except ExprError as exc:
        from rich.cells import cell_len

        text = exc.text.replace("\n", " ").replace("\t", " ")
        caret = " " * cell_len(visible(text[: exc.column])) + "^"
        print(f"wordkin: expression, column {exc.column + 1}: {visible(exc.expected)}", file=sys.stderr)
        print(f"  {visible(text)}\n  {caret}", file=sys.stderr)
        return exc.exit_code
    emit_json(res.to_json()) if args.json else sys.stdout.write(calc_text(res))
    _maybe_save(args, vs, res)
    return 0


def cmd_sim(args: argparse.Namespace) -> int:
    from index.similarity import similarity

    from .render import similarity_text

    vs = open_set(args)
    res = similarity(vs, list(args.words))
    emit_json(res.to_json()) if args.json else sys.stdout.write(similarity_text(res))
    _maybe_save(args, vs, res)
    return 0


def cmd_score(args: argparse.Namespace) -> int:
    from index.scoring import score_analogies, score_pairs

    from .progress_bar import stderr_progress
    from .render import score_text

    vs = open_set(args)
    if args.analogies:
        with stderr_progress() as report:
            res: Any = score_analogies(
                vs,
                args.analogies,
                method=args.method,
                top=args.top,
                case_fold=args.case_fold,
                progress=report,
            )
    else:
        res = score_pairs(vs, args.pairs, top=args.top, case_fold=args.case_fold)
    emit_json(res.to_json()) if args.json else sys.stdout.write(score_text(res))
    return 0


def _maybe_save(args: argparse.Namespace, vs: Any, res: Any) -> None:
    if not getattr(args, "save", None):
        return
    from .notebook import Notebook, entry_from_result

    with Notebook.open(args.save) as nb:
        entry_id = nb.add(entry_from_result(res, vs, note=args.note))
    print(f"wordkin: saved as entry {entry_id} in {args.save}", file=sys.stderr)


def _info_dict(vs: Any) -> dict[str, Any]:
    idx = vs.meta.get("index") or {}
    return {
        "words": vs.n,
        "dims": vs.dims,
        "format": vs.format,
        "source": str(vs.source),
        "cache": str(vs.cache_dir) if vs.cache_dir else None,
        "index": {
            "state": idx.get("state", "empty"),
            "trees": idx.get("trees"),
            "recall_at_10": idx.get("recall_at_10"),
            "search_k": idx.get("search_k"),
        },
    }


def _print_info(d: dict[str, Any]) -> None:
    from .safe_text import visible

    idx = d["index"]
    lines = [
        f"source   {visible(d['source'])}",
        f"format   {d['format']}",
        f"words    {d['words']:,}",
        f"dims     {d['dims']}",
        f"cache    {d['cache'] or 'off'}",
    ]
    if idx["state"] == "ready":
        lines.append(
            f"index    ready: annoy, {idx['trees']} trees, search_k {idx['search_k']}, "
            f"recall@10 {idx['recall_at_10']:.3f} (measured against exact search)"
        )
    else:
        lines.append(f"index    {idx['state']} (queries are answered by exact search; `wordkin prepare` builds it)")
    sys.stdout.write("\n".join(lines) + "\n")


def cmd_info(args: argparse.Namespace) -> int:
    vs = open_set(args)
    d = _info_dict(vs)
    emit_json(d) if args.json else _print_info(d)
    return 0


def cmd_prepare(args: argparse.Namespace) -> int:
    from index import ann
    from index.errors import UsageError

    from .progress_bar import stderr_progress

    if args.trees is not None and not 1 <= args.trees <= 1000:
        raise UsageError(f"--trees must be between 1 and 1000, not {args.trees}")
    if args.no_cache:
        raise UsageError("prepare writes the cache; it cannot be used with --no-cache")
    vs = open_set(args)
    print(f"wordkin: vectors {vs.cache_note} ({vs.meta.get('parse_seconds', 0)} s to parse)", file=sys.stderr)
    with stderr_progress() as report:
        ann.build(vs, n_trees=args.trees, progress=report)
    _print_info(_info_dict(vs))
    idx = vs.meta["index"]
    sys.stdout.write(f"built    in {idx['build_seconds']} s; p50 query {idx['query_ms_p50']} ms\n")
    return 0


def cmd_export(args: argparse.Namespace) -> int:
    from .export import export_command, write_file

    text = export_command(args)
    if args.output and args.output != "-":
        p = write_file(args.output, text, force=args.force)
        print(f"wordkin: wrote {p}", file=sys.stderr)
    else:
        sys.stdout.write(text)
    return 0


def cmd_import(args: argparse.Namespace) -> int:
    from .export import import_json
    from .notebook import Notebook

    with Notebook.open(args.notebook) as nb:
        n = import_json(args.json_file, nb)
    print(f"wordkin: imported {n} entries into {args.notebook}", file=sys.stderr)
    return 0


def cmd_open(args: argparse.Namespace) -> int:
    from .app import run_console

    return run_console(args.file, args)


def cmd_demo(args: argparse.Namespace) -> int:
    from demo_vectors import demo_path

    if args.path:
        print(demo_path())
        return 0
    from .app import run_console

    return run_console(str(demo_path()), args)


__all__ = ["cmd_near", "cmd_info", "cmd_prepare", "cmd_open", "cmd_demo", "warn"]
