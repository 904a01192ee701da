"""The ``wordkin`` command. Headless commands import no textual; data goes to stdout, progress and warnings to
stderr. Exit codes: 0 done, 2 usage, 3 unknown word, 4 unreadable/malformed file, 1 anything else."""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence

from wordkin.console.formats.safe_text import visible
from wordkin.index.errors import UsageError, WordkinError


def main(argv: Sequence[str] | None = None) -> int:
    from wordkin.console.cli.registry import COMMANDS, build_parser

    args = build_parser().parse_args(argv)
    try:
        return int(COMMANDS[args.cmd].handler(args) or 0)
    except UsageError as exc:
        print(f"wordkin: {visible(exc.message)}", file=sys.stderr)
        return exc.exit_code
    except WordkinError as exc:
        print(f"wordkin: {exc.title}: {visible(exc.message)}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("wordkin: interrupted", file=sys.stderr)
        return 1
    except BrokenPipeError:
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except Exception as exc:  # noqa: BLE001 - the contract: a short message, no traceback unless --debug
        if getattr(args, "debug", False):
            raise
        print(
            f"wordkin: unexpected error: {type(exc).__name__}: {visible(str(exc))} (run with --debug)",
            file=sys.stderr,
        )
        return 1
