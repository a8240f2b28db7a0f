#!/usr/bin/env python3
# Regenerates docs/guide.md from docs/tools/guide.tmpl: every @@RUN cmd@@ block is
# replaced by the command and its real output (run from a built tree: build/sheetwalk).
import subprocess, shlex, os
os.chdir(os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', '..'))
B='./build/sheetwalk'
def run(cmd, maxlines=None):
    args = shlex.split(cmd)
    args[0] = B
    p = subprocess.run(args, capture_output=True, text=True, input=None)
    out = p.stdout + p.stderr
    lines = out.rstrip('\n').split('\n')
    if maxlines and len(lines) > maxlines:
        lines = lines[:maxlines] + ['...']
    return "```\n$ " + cmd + "\n" + "\n".join(lines) + "\n```\n"
def run_in(cmd, inp):
    p = subprocess.run(shlex.split(cmd.replace('sheetwalk', B, 1)), capture_output=True, text=True, input=inp)
    return "```\n$ " + cmd + " <<'EOF'\n" + inp + "EOF\n" + p.stdout + p.stderr + "```\n"
doc = open(os.path.join(os.path.dirname(os.path.abspath(__file__)), 'guide.tmpl')).read()
import re
def sub(m):
    spec = m.group(1)
    if spec.startswith('RUN '):
        rest = spec[4:]
        n = None
        if rest.startswith('['):
            n = int(rest[1:rest.index(']')]); rest = rest[rest.index(']')+1:].strip()
        return run(rest, n)
    if spec.startswith('BATCH '):
        cmd, inp = spec[6:].split('|||')
        return run_in(cmd.strip(), inp.strip()+"\n")
    return m.group(0)
doc = re.sub(r'@@(.*?)@@', sub, doc, flags=re.S)
open('docs/guide.md', 'w').write(doc)
