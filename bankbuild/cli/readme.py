"""The CLI reference of the README, made from the commands themselves so it cannot go stale.

Run ``python -m bankbuild.cli.readme`` to print it; ``python -m bankbuild.cli.readme --write`` puts it into README.md
between the reference markers. A test checks that the README holds exactly what this prints.
"""

from __future__ import annotations

import sys
from pathlib import Path

START = "<!-- cli-reference:start -->"
END = "<!-- cli-reference:end -->"


def _commands(group, prefix: str):
    import typer

    for name in sorted(group.commands):
        command = group.commands[name]
        if isinstance(command, typer.main.TyperGroup) or hasattr(command, "commands"):
            yield from _commands(command, f"{prefix} {name}")
        else:
            yield f"{prefix} {name}", command


def reference() -> str:
    """Markdown for every command: usage line, help text, arguments and options."""
    import typer

    from bankbuild.cli.app import app

    root = typer.main.get_command(app)
    out = []
    for path, command in _commands(root, "bankbuild"):
        args = " ".join(p.name.upper() if p.required else f"[{p.name.upper()}]"
                        for p in command.params if p.param_type_name == "argument")
        out.append(f"### `{path}{' ' + args if args else ''}`\n")
        out.append((command.help or "").strip() + "\n")
        rows = []
        for param in command.params:
            if param.param_type_name == "argument":
                rows.append(f"| `{param.name.upper()}` | {getattr(param, 'help', '') or ''} |")
            else:
                names = ", ".join(f"`{o}`" for o in param.opts)
                default = param.default
                shown = "" if default in (None, False) or param.is_flag else f" (default: `{default}`)"
                rows.append(f"| {names} | {(param.help or '').strip()}{shown} |")
        if rows:
            out.append("| argument / option | meaning |\n|---|---|")
            out.extend(rows)
            out.append("")
    return "\n".join(out).strip() + "\n"


def readme_block(readme_text: str) -> str:
    """The part of the README between the markers."""
    start = readme_text.index(START) + len(START)
    return readme_text[start:readme_text.index(END)].strip() + "\n"


def main() -> None:
    text = reference()
    if "--write" in sys.argv:
        readme = Path(__file__).resolve().parents[2] / "README.md"
        old = readme.read_text(encoding="utf-8")
        head, rest = old.split(START, 1)
        tail = rest.split(END, 1)[1]
        readme.write_text(f"{head}{START}\n{text}{END}{tail}", encoding="utf-8")
    else:
        sys.stdout.write(text)


if __name__ == "__main__":
    main()
