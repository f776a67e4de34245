#!/usr/bin/env python3
"""The README's example commands and the output it shows, checked against the program.

Every line starting with "wayward " inside the README's <!-- example-commands --> ... <!-- /example-commands -->
blocks runs, in order, in a scratch folder that links the bundled scenarios. A fenced block right after a line
`<!-- output of: COMMAND -->` shows what COMMAND prints (standard output); COMMAND runs in the same scratch folder,
after the example commands before it. The shown text must equal what the program printed, except for the few
volatile fields masked below (CPU and wall times, the campaign's id, which hashes the spec's absolute path).

  readme_output.py WAYWARD README            check (exit 1 on any difference, with a diff)
  readme_output.py WAYWARD README --update   rewrite the shown blocks from what the program prints now
"""
import difflib
import os
import re
import shlex
import subprocess
import sys
import tempfile

MARK = re.compile(r"^<!-- output of: (.+?) -->\s*$")
# Volatile fields: each is replaced by a placeholder on both sides before comparing.
MASKS = [
    (re.compile(r"\b\d+(\.\d+)? (s|ms|seconds|minutes)\b(?! of arc)"), "<time>"),
    (re.compile(r"\(id [0-9a-f]{12}\)"), "(id <id>)"),
]


def mask(text):
    for pattern, repl in MASKS:
        text = pattern.sub(repl, text)
    return text


def example_commands(lines):
    out, on = [], False
    for line in lines:
        if "<!-- example-commands -->" in line:
            on = True
        elif "<!-- /example-commands -->" in line:
            on = False
        elif on and line.startswith("wayward "):
            out.append(line.strip())
    return out


def run(wayward, command, cwd):
    argv = shlex.split(command)
    assert argv[0] == "wayward", command
    p = subprocess.run([wayward] + argv[1:], cwd=cwd, capture_output=True, text=True, timeout=1800)
    if p.returncode != 0:
        raise SystemExit(f"readme_output: `{command}` exited {p.returncode}:\n{p.stderr}")
    return p.stdout


def main():
    if len(sys.argv) < 3:
        raise SystemExit(__doc__)
    wayward, readme = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
    update = "--update" in sys.argv[3:]
    src = os.path.dirname(readme)
    with open(readme, encoding="utf-8") as fh:
        lines = fh.read().split("\n")
    commands = example_commands(lines)
    if len(commands) < 4:
        raise SystemExit(f"readme_output: only {len(commands)} example commands in {readme}")
    # Where each shown block is: (command, index of its opening fence, index of its closing fence).
    shown = []
    for k, line in enumerate(lines):
        m = MARK.match(line)
        if not m:
            continue
        if k + 1 >= len(lines) or not lines[k + 1].startswith("```"):
            raise SystemExit(f"{readme}:{k + 1}: an output marker must be followed by a fenced block")
        end = next((j for j in range(k + 2, len(lines)) if lines[j].startswith("```")), None)
        if end is None:
            raise SystemExit(f"{readme}:{k + 2}: the fenced block never closes")
        shown.append((m.group(1).strip(), k + 1, end))
    if not shown:
        raise SystemExit(f"readme_output: {readme} shows no output marked <!-- output of: ... -->")
    printed = {}
    with tempfile.TemporaryDirectory() as work:
        os.symlink(os.path.join(src, "scenarios"), os.path.join(work, "scenarios"))
        for c in commands:
            print("+ " + c, flush=True)
            printed[c] = run(wayward, c, work)
        for c, _, _ in shown:
            if c not in printed:
                print("+ " + c, flush=True)
                printed[c] = run(wayward, c, work)
    failures = 0
    for c, begin, end in reversed(shown):
        want = "\n".join(lines[begin + 1:end])
        got = printed[c].rstrip("\n")
        if update:
            lines[begin + 1:end] = got.split("\n")
            continue
        if mask(want) != mask(got):
            failures += 1
            print(f"readme_output: the README shows other output for `{c}` (line {begin + 1}):")
            print("\n".join(difflib.unified_diff(want.split("\n"), got.split("\n"), "README", "program", lineterm="", n=1)))
    if update:
        with open(readme, "w", encoding="utf-8") as fh:
            fh.write("\n".join(lines))
        print(f"readme_output: rewrote {len(shown)} shown block(s) in {readme}")
        return 0
    print(f"readme_output: {len(commands)} example commands ran; {len(shown) - failures} passed, {failures} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
