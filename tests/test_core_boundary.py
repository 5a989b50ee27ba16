"""The headless core never loads the terminal UI libraries (STYLE.md boundary)."""

import subprocess
import sys

CORE = [
    "trayadvisor.model",
    "trayadvisor.layoutfile.reader",
    "trayadvisor.engine.currents",
    "trayadvisor.engine.field",
    "trayadvisor.engine.contour",
    "trayadvisor.analysis.summary",
    "trayadvisor.ranking.rank",
    "trayadvisor.output.exports",
    "trayadvisor.coupling.victims",
    "trayadvisor.coupling.constraints",
    "trayadvisor.limits",
    "trayadvisor.output.report",
    "trayadvisor.batch",
    "trayadvisor.output.wording",
    "trayadvisor.output.cautions",
    "trayadvisor.cli.main",
]


def test_core_does_not_import_textual_or_rich():
    code = (
        "import importlib, sys\n"
        f"for m in {CORE!r}:\n"
        "    importlib.import_module(m)\n"
        "from trayadvisor.cli.main import build_parser\n"
        "build_parser()\n"
        "bad = sorted(k for k in sys.modules if k.split('.')[0] in ('textual', 'rich'))\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_terminal_ui_does_not_import_the_command_line_layer():
    # Both are front ends on the same core; the UI must not borrow from the CLI.
    code = (
        "import sys\n"
        "import trayadvisor.tui.app\n"
        "print(','.join(sorted(k for k in sys.modules if k.startswith('trayadvisor.cli.'))))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
