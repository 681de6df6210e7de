"""``fdwall report RESULT.h5``: the self-contained HTML calculation report of a result file."""
from __future__ import annotations

from pathlib import Path

from ..report import html as _html
from . import common

__all__ = ["register", "cmd_report"]

_IDENT = ("project", "equipment", "author", "checker", "revision", "date")


def cmd_report(args) -> int:
    """Render RESULT.h5 to HTML; exit 2 when it is not an fdwall result."""
    src = Path(args.result)
    if not src.is_file():
        raise common.InputError(f"RESULT '{src}' does not exist; give an fdwall result file (.h5).")
    out = Path(args.out) if args.out else src.with_name(f"{src.stem}-report.html")
    ident = {k: getattr(args, k) for k in _IDENT if getattr(args, k)}
    try:
        path = _html.write_report(src, out, units=args.units, ident=ident)
    except common._LibInputError as exc:
        raise common.InputError(str(exc)) from None
    except OSError as exc:
        raise common.WriteError(f"cannot write the report '{out}': {exc.strerror or exc}.") \
            from None
    print(str(path))
    return 0


def register(sub) -> None:
    """Add the ``report`` command."""
    p = sub.add_parser("report", help="self-contained HTML calculation report of a result file",
                       description="Render an fdwall result file (.h5) as one self-contained "
                       "HTML file (inline CSS, embedded plots) that prints well to PDF.")
    p.add_argument("result", metavar="RESULT.h5", help="result file written by an fdwall command")
    p.add_argument("--out", metavar="FILE", default=None,
                   help="HTML file to write (default <stem>-report.html beside RESULT)")
    p.add_argument("--units", choices=("si", "us"), default="si",
                   help="display units: si (degC, default) or us (degF, in, Btu/h ...)")
    for k in _IDENT:
        p.add_argument(f"--{k}", default=None, metavar="TEXT",
                       help=f"{k} for the identification block (overrides the case file's "
                            "[report] table)")
    p.set_defaults(func=cmd_report)
