"""Regenerate the outputs shown in docs/tutorial.md by running the commands it shows.

Every ```console block is a sequence of ``$ COMMAND`` lines, each followed by what it printed.
This script runs each ``$ robust ...`` command from the project root (``python -m robust``,
standard error first, then standard output, as a terminal shows them for these commands),
answers ``$ echo $?`` with the previous exit code, and writes the blocks back. Lines of a
block that are not commands are replaced; the prose around the blocks is left alone.

Run it after changing what a command prints:

    python3 docs/generate_tutorial_outputs.py
"""

from __future__ import annotations

import json
import re
import shlex
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TUTORIAL = ROOT / "docs" / "tutorial.md"
BLOCK = re.compile(r"^```console\n(.*?)^```\n", re.MULTILINE | re.DOTALL)
#: Files the tutorial asks the reader to make: name -> (made from, text replaced, by).
MADE = {
    "servo_light.toml": ("cases/servo_pid.toml", "range = [2.0e-5, 6.0e-5]", "range = [5.0e-6, 6.0e-5]"),
    "mount_payload.toml": ("cases/isolation_mount.toml", 'nominal = 3\ntolerance = "10%"', "range = [0.02, 6]"),
}
#: For ``--json`` the tutorial shows these keys of the document only.
JSON_KEYS = ("case", "verdict", "method", "witness")
WITNESS_KEYS = ("parameters", "coefficients")


def _excerpt(text: str) -> str:
    data = json.loads(text)
    shown = {k: data[k] for k in JSON_KEYS if k in data}
    if isinstance(shown.get("witness"), dict):
        shown["witness"] = {k: shown["witness"][k] for k in WITNESS_KEYS}
    return json.dumps(shown, indent=2) + "\n(an excerpt: the whole document has more keys)"


def _run(command: str, scratch: Path) -> tuple[str, int]:
    words = shlex.split(command)
    # report directories go to a scratch folder, so that re-running never meets an old report
    words = [str(scratch / w) if i and words[i - 1] in ("-o", "--output") else w for i, w in enumerate(words)]
    done = subprocess.run([sys.executable, "-m", "robust", *words[1:]], cwd=scratch, capture_output=True,
                          text=True, check=False, timeout=1800)
    stdout = _excerpt(done.stdout) if "--json" in words and done.returncode in (0, 1) else done.stdout
    progress = done.stderr.replace("\r", "\n").lstrip("\n")  # a progress line rewrites itself
    text = progress + stdout
    text = text.replace(str(scratch) + "/", "")
    return text.rstrip("\n"), done.returncode


def regenerate(text: str) -> str:
    """The tutorial with every console block's outputs made anew."""
    with tempfile.TemporaryDirectory() as folder:
        scratch = Path(folder)
        (scratch / "cases").symlink_to(ROOT / "cases")
        for name, (source, old, new) in MADE.items():
            original = (ROOT / source).read_text(encoding="utf-8")
            assert old in original, (source, old)
            (scratch / name).write_text(original.replace(old, new), encoding="utf-8")

        def block(match: re.Match) -> str:
            out, code = [], 0
            for line in match.group(1).splitlines():
                if not line.startswith("$ "):
                    continue
                out.append(line)
                command = line[2:].strip()
                if command == "echo $?":
                    out.append(str(code))
                elif command.startswith("robust "):
                    shown, code = _run(command, scratch)
                    if shown:
                        out.append(shown)
            return "```console\n" + "\n".join(out) + "\n```\n"

        return BLOCK.sub(block, text)


def main() -> None:
    TUTORIAL.write_text(regenerate(TUTORIAL.read_text(encoding="utf-8")), encoding="utf-8")
    print(f"wrote {TUTORIAL}")


if __name__ == "__main__":
    main()
