#!/usr/bin/env python3
"""manpage.py - a man page (troff, man macros) from the built command's own
--help, so that the page and the help cannot say different things.

    manpage.py LACUNA [COMMAND] --out FILE [--see-also PAGE]... [--file PATH:WHAT]...

Runs `LACUNA --help` (for the summary line of each command) and `LACUNA
COMMAND --help`, and turns the help text into a page named lacuna(1) or
lacuna-COMMAND(1):

  NAME         lacuna-COMMAND - the summary from `lacuna --help`
  SYNOPSIS     the "usage:" lines, as they are
  DESCRIPTION  the rest of the help, word for word: unindented lines are
               filled paragraphs (a line such as "Example: ..." or "exit
               status: ..." starts one of its own); an indented "--option VALUE  what it does"
               (or the option alone, its text indented below) is a tagged
               paragraph; other indented lines stay indented; a line starting
               with "lacuna " (a second usage form) keeps its line breaks
  FILES        the --file arguments (installed paths, from meson)
  SEE ALSO     the --see-also arguments

Every word of the help after "usage:" appears in the page in the same order
(tests/server/install.py checks that on the installed pages). The page has
no date, so that the same build makes the same bytes. Meson runs this at
build time (dist/meson.build); the program is the one just built.
"""
import argparse
import re
import subprocess
import sys

# An option tag: "--name" or "-n", perhaps one upper-case VALUE after one space.
OPTION = re.compile(r"^(-[-\w]*(?: [A-Z][\w:|./-]*)?)(?:\s{2,}|\s+(?=\S))(.*)$")
OPTION_ALONE = re.compile(r"^(-[-\w]*(?: [A-Z][\w:|./-]*)?)$")
# A line that starts a paragraph of its own: "Example: ...", "exit status: ...".
LEAD = re.compile(r"^[A-Za-z][\w ]{0,20}: ")
# A word tag in a list such as the command table: "plan     plan one frame".
WORD = re.compile(r"^([a-z][\w-]*)\s{2,}(\S.*)$")


def run(argv):
    out = subprocess.run(argv, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    if out.returncode != 0:
        sys.exit("manpage.py: %s exited %d: %s" % (" ".join(argv), out.returncode,
                                                    out.stderr.strip()))
    return out.stdout


def esc(text):
    """Text for troff: backslashes, minus signs (so options copy as typed)."""
    return text.replace("\\", "\\e").replace("-", "\\-")


def line(text):
    """One input line of text: a leading . or ' would be read as a request."""
    text = esc(text.strip())
    return "\\&" + text if text[:1] in (".", "'") else text


def tag(text):
    """An option tag in bold, its VALUE in italics."""
    name, _, value = text.partition(" ")
    out = "\\fB" + esc(name) + "\\fR"
    return out + (" \\fI" + esc(value) + "\\fR" if value else "")


def indent(s):
    return len(s) - len(s.lstrip(" "))


def summaries(main_help):
    """{command: summary} from the commands table of `lacuna --help`."""
    table, found = {}, False
    for s in main_help.splitlines():
        if s.strip() == "commands:":
            found = True
        elif found and s.startswith("  "):
            m = WORD.match(s.strip())
            if m:
                table[m.group(1)] = m.group(2)
        elif found and s.strip():
            break
    return table


def split_usage(lines):
    """The "usage:" lines (and their continuations) and what follows."""
    i = 0
    while i < len(lines) and not lines[i].startswith("usage:"):
        i += 1
    if i == len(lines):
        return [], lines
    pad = len("usage: ")
    usage = [lines[i][pad:]]
    j = i + 1
    while j < len(lines) and lines[j].strip() and indent(lines[j]) > 0:
        usage.append(lines[j][pad:] if indent(lines[j]) >= pad else lines[j].strip())
        j += 1
    return usage, lines[:i] + lines[j:]


def block_to_troff(block):
    """One run of non-blank help lines."""
    out, i = [], 0
    while i < len(block):
        s, ind = block[i], indent(block[i])
        body = s.strip()
        if ind == 0 and body.startswith("lacuna "):
            # a usage form of its own: its lines as they are
            out.append(".PP\n.nf")
            out.append(line(body))
            i += 1
            while i < len(block) and indent(block[i]) > 2:
                out.append("\\&" + esc(block[i]))
                i += 1
            out.append(".fi")
            continue
        if ind == 0:
            out.append(".PP")
            out.append(line(block[i]))
            i += 1
            while i < len(block) and indent(block[i]) == 0 and \
                    not block[i].startswith("lacuna ") and not LEAD.match(block[i]):
                out.append(line(block[i]))
                i += 1
            continue
        deeper = i + 1 < len(block) and indent(block[i + 1]) > ind
        alone = OPTION_ALONE.match(body) and deeper
        m = None if alone else OPTION.match(body) or WORD.match(body)
        if m or alone:
            out.append(".TP\n" + tag(m.group(1) if m else body))
            if m and m.group(2):
                out.append(line(m.group(2)))
            i += 1
            while i < len(block) and indent(block[i]) > ind:
                out.append(line(block[i]))
                i += 1
            continue
        # indented prose: one indented paragraph
        out.append(".RS %d\n.PP" % min(ind, 8))
        while i < len(block) and indent(block[i]) == ind and not (
                OPTION.match(block[i].strip()) or WORD.match(block[i].strip())):
            out.append(line(block[i]))
            i += 1
        out.append(".RE")
    return out


def body_to_troff(lines):
    out, block = [], []
    for s in lines + [""]:
        if s.strip():
            block.append(s.rstrip())
        elif block:
            out += block_to_troff(block)
            block = []
    return out


def page(exe, command, see_also, files):
    main_help = run([exe, "--help"])
    first = main_help.splitlines()[0]  # "lacuna VERSION - what it is"
    m = re.match(r"^lacuna (\S+) - (.*)$", first)
    if not m:
        sys.exit("manpage.py: unexpected first line of lacuna --help: " + first)
    version, what = m.group(1), m.group(2)
    if command:
        table = summaries(main_help)
        if command not in table:
            sys.exit("manpage.py: %s is not in the commands of lacuna --help" % command)
        name, what = "lacuna-" + command, table[command]
        text = run([exe, command, "--help"])
    else:
        name, text = "lacuna", "\n".join(main_help.splitlines()[1:])
    usage, rest = split_usage(text.splitlines())
    out = ['.\\" Generated by scripts/manpage.py from `%s --help`: edit the help, not this.'
           % " ".join(["lacuna"] + ([command] if command else [])),
           '.TH %s 1 "" "lacuna %s" "lacuna manual"' % (name.upper(), version),
           ".nh", ".ad l", ".SH NAME", "%s \\- %s" % (esc(name), esc(what))]
    if usage:
        out += [".SH SYNOPSIS", ".nf"] + ["\\&" + esc(u) for u in usage] + [".fi"]
    out += [".SH DESCRIPTION"] + body_to_troff(rest)
    if files:
        out.append(".SH FILES")
        for f in files:
            path, _, what_file = f.partition(":")
            out += [".TP", "\\fI%s\\fR" % esc(path), line(what_file)]
    if see_also:
        refs = [re.match(r"^(.*)\((\d)\)$", s) for s in see_also]
        out += [".SH SEE ALSO", ",\n".join("\\fB%s\\fR(%s)" % (esc(r.group(1)), r.group(2))
                                            for r in refs if r)]
    return "\n".join(out) + "\n"


def main():
    ap = argparse.ArgumentParser(description="a man page from lacuna's --help")
    ap.add_argument("exe")
    ap.add_argument("command", nargs="?")
    ap.add_argument("--out", required=True)
    ap.add_argument("--see-also", action="append", default=[])
    ap.add_argument("--file", action="append", default=[])
    a = ap.parse_args()
    text = page(a.exe, a.command, a.see_also, a.file)
    with open(a.out, "w") as f:
        f.write(text)


if __name__ == "__main__":
    main()
