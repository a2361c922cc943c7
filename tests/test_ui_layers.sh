#!/usr/bin/env bash
# test_ui_layers.sh — the layers of ui/ (DEVELOPERS.md, "The explorer's
# layers") stay as documented:
#   - a file includes only headers of its own layer or below, and the graph
#     of quoted includes in src/ and ui/ has no cycle;
#   - a file calls no function defined in a file of a higher layer (so no
#     screen calls back into the dispatcher explorer.c);
#   - the screens, the prompt and the frame see no Arb, Acb or Calcium
#     header and not src/analysis.h, directly or through another header
#     (the compiler's own list of included files, with the flags of
#     compile_commands.json): they read the analysis through
#     src/analysis_view.h only.
# Needs NILSTEP_SOURCE_DIR and NILSTEP_BUILD_DIR.
set -u
src=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}
build=${NILSTEP_BUILD_DIR:-$src/build}
PY=/usr/bin/python3
[[ -x $PY ]] || { echo "skip: no /usr/bin/python3"; exit 77; }

exec "$PY" - "$src" "$build" <<'EOF'
import json, os, re, shlex, subprocess, sys

src, build = sys.argv[1], sys.argv[2]
ui = os.path.join(src, "ui")
problems = []

# The layers, lowest first.  A module is a .c file and its header.
LAYERS = [
    # 0: tools that know nothing of the explorer's state
    {"lineedit", "numfmt", "plot", "paint", "viewmodel", "memlimit", "recovery", "defaults",
     "filepath", "export"},
    # 1: the explorer's state and what every screen shares
    {"app", "frame"},
    # 2: the screens and the prompt (sideways calls among them are allowed)
    {"screens", "prompt", "screen_*"},
    # 3: the dispatcher: main loop, computations, files
    {"explorer"},
    # 4: the program: command line and the entry point
    {"main", "cli", "cli_*"},
]

def layer_of(module):
    for k, names in enumerate(LAYERS):
        for n in names:
            if n == module or (n.endswith("*") and module.startswith(n[:-1])):
                return k
    return None

def strip_comments(text):
    text = re.sub(r"/\*.*?\*/", lambda m: "\n" * m.group(0).count("\n"), text, flags=re.S)
    text = re.sub(r"//[^\n]*", "", text)
    return re.sub(r'"(\\.|[^"\\\n])*"', '""', text)

files = sorted(f for f in os.listdir(ui) if f.endswith((".c", ".h")))
for f in files:
    if layer_of(f.rsplit(".", 1)[0]) is None:
        problems.append(f"ui/{f}: in no layer of this test (add it to LAYERS and to DEVELOPERS.md)")

# ---- includes: only the own layer or below -----------------------------
inc_re = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)
for f in files:
    lf = layer_of(f.rsplit(".", 1)[0])
    text = open(os.path.join(ui, f), encoding="utf-8").read()
    for h in inc_re.findall(text):
        if not os.path.exists(os.path.join(ui, h)):
            continue  # an engine header (src/): below every ui layer
        lh = layer_of(h.rsplit(".", 1)[0])
        if lf is not None and lh is not None and lh > lf:
            problems.append(f"ui/{f} (layer {lf}) includes {h} (layer {lh})")

# ---- the quoted-include graph of src/ and ui/ has no cycle ---------------
graph = {}
for d in ("src", "ui"):
    for f in os.listdir(os.path.join(src, d)):
        if f.endswith(".h"):
            text = open(os.path.join(src, d, f), encoding="utf-8").read()
            graph[f] = [h for h in inc_re.findall(text)]
state = {}
def visit(h, path):
    if state.get(h) == 1:
        problems.append("include cycle: " + " -> ".join(path[path.index(h):] + [h]))
        return
    if state.get(h) == 2 or h not in graph:
        return
    state[h] = 1
    for g in graph[h]:
        visit(g, path + [h])
    state[h] = 2
for h in sorted(graph):
    visit(h, [])

# ---- calls: never into a higher layer -------------------------------------
def_re = re.compile(r"^(?!static\b|typedef\b|extern\b)[A-Za-z_][^;(]*?\b([a-z_][a-z0-9_]*)\s*\(", re.M)
defined = {}  # function -> (file, layer)
texts = {}
for f in files:
    if not f.endswith(".c"):
        continue
    t = strip_comments(open(os.path.join(ui, f), encoding="utf-8").read())
    texts[f] = t
    for m in def_re.finditer(t):
        # a definition: the parameter list is followed by "{", not ";"
        rest = t[m.end():]
        depth, i = 1, 0
        while i < len(rest) and depth:
            depth += {"(": 1, ")": -1}.get(rest[i], 0)
            i += 1
        after = rest[i:].lstrip()
        if m.group(1) in ("if", "for", "while", "switch", "return", "sizeof"):
            continue
        if after.startswith("{") or after.startswith("__attribute__"):
            defined[m.group(1)] = (f, layer_of(f[:-2]))
if "app_draw_header" not in defined or "explorer_run" not in defined:
    problems.append("the definition scan found neither app_draw_header nor explorer_run: fix this test")
for f, t in texts.items():
    lf = layer_of(f[:-2])
    for name, (g, lg) in defined.items():
        if g == f or lf is None or lg is None or lg <= lf:
            continue
        if re.search(r"\b" + re.escape(name) + r"\s*\(", t):
            problems.append(f"ui/{f} (layer {lf}) calls {name}() of ui/{g} (layer {lg})")

# ---- the screens, the prompt and the frame see no Arb, Acb or Calcium
# header and not the analysis itself (analysis.h), only its read-only view
# (analysis_view.h)
cc_json = os.path.join(build, "compile_commands.json")
if not os.path.exists(cc_json):
    print(f"skip: {cc_json} not found (configure the build first)")
    sys.exit(77)
heavy = re.compile(r"(^|/)(arb|acb|arf|mag|arb_[a-z_]*|acb_[a-z_]*)\.h$|/calcium/|/src/analysis\.h$")
checked = 0
for e in json.load(open(cc_json)):
    path = os.path.realpath(e["file"])
    base = os.path.basename(path)
    if os.path.dirname(path) != os.path.realpath(ui):
        continue
    if not (base.startswith("screen_") or base in ("prompt.c", "frame.c")):
        continue
    args = e["arguments"] if "arguments" in e else shlex.split(e["command"])
    out = []
    skip = False
    for a in args:
        if skip:
            skip = False
            continue
        if a == "-o":
            skip = True
            continue
        if a == "-c" or a.startswith("-MD") or a.startswith("-MF") or a.startswith("-MT") or a.startswith("-MQ"):
            if a in ("-MF", "-MT", "-MQ"):
                skip = True
            continue
        out.append(a)
    r = subprocess.run(out + ["-M"], cwd=e["directory"], capture_output=True, text=True)
    if r.returncode != 0:
        problems.append(f"ui/{base}: the compiler could not list its headers: {r.stderr.strip()[:300]}")
        continue
    checked += 1
    deps = r.stdout.replace("\\\n", " ").split()
    bad = sorted({d for d in deps if heavy.search(d)})
    if bad:
        problems.append(f"ui/{base} sees {', '.join(os.path.basename(b) for b in bad[:4])}"
                        f"{' ...' if len(bad) > 4 else ''}")
if checked == 0:
    problems.append("no screen found in compile_commands.json: fix this test")

for p in problems:
    print("FAIL:", p)
if problems:
    sys.exit(1)
print(f"ui layers: {len(files)} files, {len(defined)} functions, "
      f"{checked} files checked for Arb, Acb, Calcium and analysis.h")
EOF
