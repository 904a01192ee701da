"""``wordkin score``: a vector set on an analogy or word-pair benchmark file."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from wordkin.console.cli.io import emit_json, open_set
from wordkin.console.cli.registry import Command, register


def cmd_score(args: argparse.Namespace) -> int:
    from wordkin.console.cli.progress_bar import stderr_progress
    from wordkin.console.formats.text_tables import score_text
    from wordkin.index.scoring import read_analogies, read_pairs, score_analogies, score_pairs

    vs = open_set(args)
    if args.analogies:
        with stderr_progress() as report:
            res: Any = score_analogies(
                vs,
                read_analogies(args.analogies),
                method=args.method,
                top=args.top,
                case_fold=args.case_fold,
                progress=report,
            )
    else:
        res = score_pairs(vs, read_pairs(args.pairs), top=args.top, case_fold=args.case_fold)
    emit_json(res.to_json()) if args.json else sys.stdout.write(score_text(res))
    return 0


def _arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file")
    g = p.add_mutually_exclusive_group(required=True)
    g.add_argument("--analogies", metavar="PATH")
    g.add_argument("--pairs", metavar="PATH")
    p.add_argument("--method", choices=("add", "mul"), default="add")
    p.add_argument("--top", type=int, metavar="N", default=300_000)
    p.add_argument("--case-fold", action="store_true")
    p.add_argument("--json", action="store_true")


register(Command("score", "score on an analogy or word-pair benchmark", cmd_score, _arguments, 50))
