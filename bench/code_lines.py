"""Code lines of qbar's packages: lines that hold code, not docstrings, comments or blank lines.

    .venv/bin/python -m bench.code_lines                      # service/api, service/physics and their largest files
    .venv/bin/python -m bench.code_lines service/api --top 5

A line counts when a token other than a comment, a docstring or layout (newline, indent) starts on it or
runs across it; a line inside a multi-line expression counts once. Docstrings are the string statements
that open a module, class or function (ast). Not part of the test suite: a figure for issue 11's measures.
"""

from __future__ import annotations

import argparse
import ast
import io
import pathlib
import tokenize

LAYOUT = {tokenize.COMMENT, tokenize.NL, tokenize.NEWLINE, tokenize.INDENT, tokenize.DEDENT,
          tokenize.ENCODING, tokenize.ENDMARKER}


def docstring_lines(tree: ast.AST) -> set[int]:
    """Line numbers covered by the docstrings of a module's module, classes and functions."""
    lines: set[int] = set()
    for node in ast.walk(tree):
        if isinstance(node, (ast.Module, ast.ClassDef, ast.FunctionDef, ast.AsyncFunctionDef)) and node.body:
            first = node.body[0]
            if (isinstance(first, ast.Expr) and isinstance(first.value, ast.Constant)
                    and isinstance(first.value.value, str)):
                lines.update(range(first.lineno, first.end_lineno + 1))
    return lines


def code_lines(source: str) -> int:
    """The number of lines of `source` that hold code.

    >>> code_lines('\"\"\"Doc.\"\"\"\\n\\n# note\\nx = (1,\\n     2)  # two\\n')
    2
    """
    docs = docstring_lines(ast.parse(source))
    lines: set[int] = set()
    for token in tokenize.generate_tokens(io.StringIO(source).readline):
        if token.type in LAYOUT or token.start[0] in docs:
            continue
        lines.update(range(token.start[0], token.end[0] + 1))
    return len(lines)


def measure(root: pathlib.Path) -> dict[str, tuple[int, int]]:
    """Relative path -> (all lines, code lines) of every .py file below `root`."""
    sizes = {}
    for path in sorted(root.rglob("*.py")):
        text = path.read_text(encoding="utf-8")
        sizes[str(path)] = (len(text.splitlines()), code_lines(text))
    return sizes


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folders", nargs="*", default=["service/api", "service/physics"])
    parser.add_argument("--top", type=int, default=8, help="how many of the largest files to list per folder")
    args = parser.parse_args(argv)
    for folder in args.folders:
        sizes = measure(pathlib.Path(folder))
        total = sum(lines for lines, _ in sizes.values())
        code = sum(code for _, code in sizes.values())
        print(f"{folder}: {len(sizes)} files, {total} lines, {code} code lines")
        for path, (lines, code) in sorted(sizes.items(), key=lambda item: -item[1][0])[:args.top]:
            print(f"  {lines:5d} lines {code:5d} code  {path}")


if __name__ == "__main__":
    main()
