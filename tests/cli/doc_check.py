#!/usr/bin/python3
"""doc_check.py: the documentation cannot drift from the program.

Usage: doc_check.py BINARY DEMO_DB REPO_ROOT

1. Every example of every --help text (the top level, each command, each subcommand) runs on a
   copy of the demo store and exits 0. The example lines are the indented lines after a line
   "example:" or "examples:". The examples of one help text run in order, in a fresh temporary
   folder, on a fresh copy of the demo store: it is $CPDOMAIN_DB and also the file 'lab.db' (the
   name the examples give the lab's store); other store names start absent. The input files the
   examples name are made in that folder from the demo's own data (FIXTURES below), so an example
   that writes a file writes it there and one that changes the store changes only its copy.
   An example on a PostgreSQL store (a line naming postgresql://) is left out: it needs a server.
2. Every fenced block of README.md whose lines start with "$ cpdomain" is run in a fresh folder
   holding demo/demo.db (a fresh copy of the demo store) and demo/data, its commands in order, and
   the stdout of each is compared line by line with the lines under it, up to the next "$ " line
   or the end of the block (trailing blanks ignored). The rule for abridged output:
     - a line that is only "..." (indented or not) stands for any number of skipped lines;
     - a line that ends in " ..." stands for a line that starts with the text before it;
     - a "$ " line followed at once by another "$ " line shows no output: it must only exit 0.
   A fenced block whose lines are plain "cpdomain ..." commands is run the same way, exit 0 only.
Every run has CPDOMAIN_TODAY as demo/run.sh pins it. Prints "ok N - ..." / "not ok N - ...".
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile

BIN, DEMO_DB, ROOT = sys.argv[1], sys.argv[2], sys.argv[3]
DATA = os.path.join(ROOT, "demo", "data")
N = int(os.environ.get("DOC_CHECK_FIRST", "1")) - 1   # the number of the last check before ours
FAILED = 0


def report(good, what, details=()):
    global N, FAILED
    N += 1
    print(("ok %d - %s" if good else "not ok %d - %s") % (N, what))
    if not good:
        FAILED += 1
        for d in details:
            print("#   " + d)


def demo_today():
    with open(os.path.join(ROOT, "demo", "run.sh")) as f:
        m = re.search(r"CPDOMAIN_TODAY=(\d{4}-\d\d-\d\d)", f.read())
    return m.group(1)


ENV = dict(os.environ)
ENV["CPDOMAIN_TODAY"] = demo_today()
ENV.pop("CPDOMAIN_DB", None)
NAN_INF = re.compile(r"(?<![A-Za-z])-?(nan|inf)(?![A-Za-z])", re.I)   # never printed (RULES: no NaN/inf)
PRELUDE = 'cpdomain() { "%s" "$@"; }\n' % BIN


def copy_store(dst):
    """A consistent copy of the demo store (the WAL folded in by sqlite3's backup)."""
    subprocess.run(["sqlite3", DEMO_DB, ".backup '%s'" % dst], check=True)


def run(line, cwd, env):
    p = subprocess.run(["bash", "-o", "pipefail", "-c", PRELUDE + line], cwd=cwd, env=env,
                       stdout=subprocess.PIPE, stderr=subprocess.PIPE, timeout=300)
    return p.returncode, p.stdout.decode("utf-8", "replace"), p.stderr.decode("utf-8", "replace")


# ---- the input files the help examples name, made from the demo's data ----
def csv_with_header(src, dst, header):
    with open(src) as f:
        rows = f.read().splitlines()
    with open(dst, "w") as f:
        f.write(header + "\n" + "\n".join(rows[1:]) + "\n")


def make_fixtures(work):
    d = lambda name: os.path.join(DATA, name)
    w = lambda name: os.path.join(work, name)
    with open(w("squad.csv"), "w") as f:
        f.write("code,name,sport,mass_kg\nC06,Ilse Brandvold,cycling,66.0\nR03,Joao Falcao,running,61.5\n")
    with open(w("trials.csv"), "w") as f:
        f.write("athlete,date,duration_s,power_w\nC03,2026-11-10,420,300\nC03,2026-11-13,980,262\n")
    with open(w("lab.csv"), "w") as f:
        f.write("Subject,Date,Watts,Tlim\nC03,2026-11-17,330,200\n")
    for src, dst in [("ramp_C03.csv", "c03_ramp.csv"), ("steps_C03.csv", "c03_steps.csv"),
                     ("ramp_R01.csv", "r01_ramp.csv"), ("lactate_C01.csv", "c01_lactate.csv"),
                     ("bout_C01_1.csv", "c01_bout1.csv"), ("allout_C01.csv", "allout_C01.csv"),
                     ("bout_C01_1.csv", "r01_bout.csv")]:   # any bout file serves the speed example
        shutil.copy(d(src), w(dst))
    os.mkdir(w("rides"))
    shutil.copy(d("session_C02_2026-10-03.csv"), w("rides/ride_2026-10-03.csv"))
    shutil.copy(d("session_C02_2026-10-04.csv"), w("rides/ride_2026-10-04.csv"))
    r02 = sorted(f for f in os.listdir(DATA) if f.startswith("session_R02_"))[0]
    with open(d(r02)) as f:
        head = f.readline().strip().split(",")
    csv_with_header(d(r02), w("run.csv"), ",".join(
        {"time_s": "Time", "speed_m_s": "Speed"}.get(h, h) for h in head))
    subprocess.run([BIN, "--db", DEMO_DB, "export", "-o", w("lab-2026-12-01.json")], check=True,
                   env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    subprocess.run("gzip -c lab-2026-12-01.json > lab-2026-12-01.json.gz", shell=True, cwd=work,
                   check=True)


# ---- 1. the help examples ----
def help_text(*words):
    p = subprocess.run([BIN, *words, "--help"], stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                       env=ENV)
    return p.stdout.decode()


def listed(text, after):
    """The first words of the indented rows after the line 'after' (or after line 3 when None)."""
    lines = text.splitlines()
    start = lines.index(after) + 1 if after else 2
    out = []
    for l in lines[start:]:
        if not l.strip():
            break
        out.append(l.split()[0])
    return out


def examples_of(text):
    ex, on = [], False
    for l in text.splitlines():
        if re.match(r"^examples?:$", l):
            on = True
        elif on and l.startswith("  ") and l.strip():
            ex.append(l.strip())
        elif on:
            on = False
    return ex


def help_texts():
    """Every help text but a family's list of subcommands (which points to theirs)."""
    top = help_text()
    yield (), top
    for c in listed(top, "commands:"):
        t = help_text(c)
        if t.startswith("usage: cpdomain %s SUBCOMMAND" % c):
            for s in listed(t, None):
                yield (c, s), help_text(c, s)
        else:
            yield (c,), t


def check_help_examples():
    total = 0
    pg_skipped = 0
    for words, text in help_texts():
        name = " ".join(("cpdomain",) + words + ("--help",))
        ex = examples_of(text)
        if not ex:
            report(False, "%s has no example" % name)
            continue
        work = tempfile.mkdtemp(prefix="cpd_docs.")
        try:
            copy_store(os.path.join(work, "lab.db"))
            make_fixtures(work)
            env = dict(ENV, CPDOMAIN_DB=os.path.join(work, "lab.db"))
            for line in ex:
                # an example on a PostgreSQL store (--db postgresql://...) needs a server: it runs in
                # tests/cli/cli_access.sh when CPDOMAIN_TEST_PG is set, not on the demo's SQLite file
                if "postgresql://" in line:
                    pg_skipped += 1
                    continue
                total += 1
                rc, out, err = run(line, work, env)
                bad = NAN_INF.search(out)
                report(rc == 0 and not bad,
                       "%s: '%s' runs on the demo store (exit %d)%s" % (name, line, rc,
                                                                        ", prints '%s'" % bad.group(0) if bad else ""),
                       err.strip().splitlines()[-3:])
        finally:
            shutil.rmtree(work)
    report(total >= 60, "%d help examples checked (%d on a PostgreSQL store left to cli_access.sh)" % (total, pg_skipped))


# ---- 2. README.md ----
def readme_blocks(path):
    blocks, cur, start = [], None, 0
    with open(path) as f:
        for i, l in enumerate(f.read().splitlines(), 1):
            if l.startswith("```"):
                if cur is None:
                    cur, start = [], i + 1
                else:
                    blocks.append((start, cur))
                    cur = None
            elif cur is not None:
                cur.append(l)
    return blocks


def line_matches(pat, got):
    if pat.endswith(" ..."):
        return got.startswith(pat[:-4].rstrip())
    return pat == got


def matches(pats, got):
    """pats against got with '...' lines as gaps; returns the index of the first mismatch or -1."""
    memo = {}
    best = [0]

    def go(i, j):
        if (i, j) in memo:
            return memo[(i, j)]
        best[0] = max(best[0], i)
        if i == len(pats):
            r = j == len(got)
        elif pats[i].strip() == "...":
            r = any(go(i + 1, k) for k in range(j, len(got) + 1))
        else:
            r = j < len(got) and line_matches(pats[i], got[j]) and go(i + 1, j + 1)
        memo[(i, j)] = r
        return r

    sys.setrecursionlimit(100000)
    return -1 if go(0, 0) else best[0]


def check_readme():
    path = os.path.join(ROOT, "README.md")
    shown = run_only = 0
    for start, lines in readme_blocks(path):
        dollar = [l for l in lines if l.startswith("$ cpdomain")]
        # lines on a PostgreSQL store (postgresql://) need a server: tests/cli/cli_access.sh
        plain = [l for l in lines if l.startswith("cpdomain ") and "postgresql://" not in l]
        if not dollar and not plain:
            continue
        work = tempfile.mkdtemp(prefix="cpd_readme.")
        try:
            os.mkdir(os.path.join(work, "demo"))
            os.symlink(DATA, os.path.join(work, "demo", "data"))
            copy_store(os.path.join(work, "demo", "demo.db"))
            copy_store(os.path.join(work, "lab.db"))
            env = dict(ENV, CPDOMAIN_DB=os.path.join(work, "lab.db"))
            if not dollar:
                for l in plain:
                    run_only += 1
                    rc, out, err = run(l, work, env)
                    report(rc == 0, "README.md:%d: '%s' exits 0 (exit %d)" % (start, l, rc),
                           err.strip().splitlines()[-3:])
                continue
            cmds = []   # (line number, command, expected lines or None)
            for k, l in enumerate(lines):
                if l.startswith("$ "):
                    cmds.append([start + k, l[2:], []])
                elif cmds:
                    cmds[-1][2].append(l.rstrip())
            for k, (ln, cmd, want) in enumerate(cmds):
                rc, out, err = run(cmd, work, env)
                while want and not want[-1]:
                    want.pop()
                if not want:
                    run_only += 1
                    report(rc == 0, "README.md:%d: '%s' exits 0 (exit %d)" % (ln, cmd, rc),
                           err.strip().splitlines()[-3:])
                    continue
                shown += 1
                got = [g.rstrip() for g in out.rstrip("\n").split("\n")]
                bad = matches(want, got)
                det = []
                if bad >= 0:
                    det = ["README line %d: '%s'" % (ln + 1 + bad, want[bad] if bad < len(want) else "")]
                    det += ["real output:"] + got[:60]
                report(rc == 0 and bad < 0,
                       "README.md:%d: '%s' prints what the README shows (exit %d)" % (ln, cmd, rc),
                       det + err.strip().splitlines()[-3:])
        finally:
            shutil.rmtree(work)
    report(shown >= 10, "%d README outputs compared, %d README commands run" % (shown, run_only))


check_help_examples()
check_readme()
sys.exit(1 if FAILED else 0)
