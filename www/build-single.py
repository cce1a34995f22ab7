#!/usr/bin/env python3
"""Writes the whole page as one self-contained HTML file that works opened from disk.

    python3 www/build-single.py [--out www/dist/sillage-standalone.html] [--data FILE]

Python standard library only. Needs www/pkg (bash www/build.sh). What it does:

* every ES module reachable from main.js gets its relative imports rewritten to bare
  specifiers (``sillage/core.js``); an import map sends each specifier to a
  ``data:text/javascript;base64,...`` URL of that module (data: modules cannot resolve
  relative imports, so they never see one);
* the wasm module travels as base64 in a non-executed data block; a small inline script
  decodes it into ``globalThis.sillageEmbedded.wasm`` before the modules run, and core.js
  compiles those bytes instead of fetching (the file may not fetch anything);
* the compute worker: Chromium starts no module worker from a blob: URL in a page opened
  from file:// (classic workers it does), and import maps do not reach workers anyway, so
  worker.js and the wasm-bindgen glue are joined into one classic script
  (``globalThis.sillageEmbedded.workerSource``) that the pool starts from a blob: URL;
* the style sheet and the icon are inlined;
* a Content-Security-Policy for this file: inline, data: and blob: scripts, blob: workers,
  and ``connect-src 'none'``, ``default-src 'none'``: the file cannot reach any network.

The demo data are not embedded (the demo is 6.9 MB, and base64 would make it 9 MB): the
file opens with the drop zone and the user opens their own files. ``--data FILE`` embeds one
data file that opens by itself, e.g. a reduced model from the page's "Share a reduced model"
(a few hundred kB): a colleague then sees the flow without the raw data.
"""

import argparse
import base64
import json
import os
import posixpath
import re
import sys

WWW = os.path.dirname(os.path.abspath(__file__))
ENTRY = "main.js"
WORKER = "compute/worker.js"
GLUE = "pkg/sillage.js"
WASM = "pkg/sillage_bg.wasm"
PREFIX = "sillage/"

POLICY = (
    "default-src 'none'; script-src 'unsafe-inline' data: blob: 'wasm-unsafe-eval'; "
    "worker-src blob:; connect-src 'none'; img-src data: blob:; style-src 'unsafe-inline'; "
    "font-src 'none'; object-src 'none'; base-uri 'none'; form-action 'none'"
)

# Static imports and re-exports with a relative specifier, at the start of a statement
# (so examples in comments are left alone): `import x from './x.js'`, `import './x.js'`,
# `export { y } from './y.js'`, also spread over several lines.
IMPORT = re.compile(
    r"""^(\s*(?:import|export)\b[^;'"]*?)(['"])(\.{1,2}/[^'"]+)\2""", re.M
)


def read(rel):
    with open(os.path.join(WWW, rel), encoding="utf-8") as f:
        return f.read()


def resolve(importer, spec):
    return posixpath.normpath(posixpath.join(posixpath.dirname(importer), spec))


def data_url(text, mime="text/javascript"):
    return f"data:{mime};base64," + base64.b64encode(text.encode("utf-8")).decode("ascii")


def collect_modules(entry):
    """{path: source with relative imports rewritten to specifiers}, entry's graph."""
    out = {}
    todo = [entry]
    while todo:
        rel = todo.pop()
        if rel in out:
            continue
        if not os.path.exists(os.path.join(WWW, rel)):
            sys.exit(f"build-single.py: {rel} is imported but missing")
        source = read(rel)

        def rewrite(m, rel=rel):
            target = resolve(rel, m.group(3))
            todo.append(target)
            return f"{m.group(1)}{m.group(2)}{PREFIX}{target}{m.group(2)}"

        out[rel] = IMPORT.sub(rewrite, source)
    return out


GLUE_DECL = re.compile(r"^export (?=(?:async\s+)?(?:function|class|const|let)\b)", re.M)
GLUE_NAME = re.compile(r"(?:async\s+)?(?:function\*?|class|const|let)\s+([A-Za-z_$][\w$]*)", re.M)
GLUE_LIST = re.compile(r"^export\s*\{([^}]*)\};?\s*$", re.M)
WORKER_IMPORT = "import init, * as wasm from '../pkg/sillage.js';"


def worker_source():
    """worker.js and the glue as one classic script.

    Chromium does not start module workers from blob: URLs in a page opened from file://
    (classic ones it does), so the worker cannot import anything there: the glue becomes a
    function scope returning its exports as the object `wasm`, and worker.js follows it
    without its import line.
    """
    glue = read(GLUE)
    lists = GLUE_LIST.findall(glue)
    if len(lists) != 1:
        sys.exit(f"build-single.py: expected one `export {{...}}` list in {GLUE}, found {len(lists)}")
    glue = GLUE_LIST.sub("", glue)
    names = []
    for m in GLUE_DECL.finditer(glue):
        n = GLUE_NAME.match(glue, m.end())
        if not n:
            sys.exit(f"build-single.py: cannot read an export of {GLUE} at offset {m.start()}")
        names.append(n.group(1))
    glue = GLUE_DECL.sub("", glue)
    if re.search(r"^\s*(import|export)\b", glue, re.M):
        sys.exit(f"build-single.py: {GLUE} has an import or export this script does not handle")
    glue = glue.replace("import.meta.url", "self.location.href")
    entries = [f"{n}: {n}" for n in names]
    for item in lists[0].split(","):
        parts = item.split(" as ")
        local = parts[0].strip()
        if local:
            entries.append(f"{(parts[1] if len(parts) > 1 else parts[0]).strip()}: {local}")
    worker = read(WORKER)
    if worker.count(WORKER_IMPORT) != 1:
        sys.exit(f"build-single.py: {WORKER} must import the glue exactly as `{WORKER_IMPORT}`")
    worker = worker.replace(WORKER_IMPORT, "const init = wasm.default;")
    if IMPORT.search(worker):
        sys.exit(f"build-single.py: {WORKER} has another import; a classic worker cannot have it")
    return f"const wasm = (() => {{\n{glue}\nreturn {{ {', '.join(entries)} }};\n}})();\n{worker}"


def replace_once(text, pattern, replacement, what):
    new, n = re.subn(pattern, lambda _m: replacement, text, count=1, flags=re.S)
    if n != 1:
        sys.exit(f"build-single.py: cannot find {what} in index.html")
    return new


def build(out_path, data_path=None):
    if not os.path.exists(os.path.join(WWW, WASM)):
        sys.exit("build-single.py: www/pkg is missing: run `bash www/build.sh` first")
    modules = collect_modules(ENTRY)
    if IMPORT.search(modules[GLUE]):
        sys.exit(f"build-single.py: {GLUE} has relative imports; the worker cannot load it inlined")
    imports = {PREFIX + rel: data_url(src) for rel, src in sorted(modules.items())}
    with open(os.path.join(WWW, WASM), "rb") as f:
        wasm_b64 = base64.b64encode(f.read()).decode("ascii")
    embedded = {"workerSource": worker_source(), "standalone": True}
    data_block = ""
    if data_path:
        with open(data_path, "rb") as f:
            data_b64 = base64.b64encode(f.read()).decode("ascii")
        embedded["dataName"] = os.path.basename(data_path)
        data_block = f'\n  <script type="application/octet-stream" id="sillage-data">{data_b64}</script>'

    html = read("index.html")
    html = replace_once(
        html,
        r'<meta http-equiv="Content-Security-Policy" content="[^"]*">',
        f'<meta http-equiv="Content-Security-Policy" content="{POLICY}">',
        "the Content-Security-Policy <meta> tag",
    )
    css = read("style.css").replace("</", "<\\/")
    html = replace_once(html, r'<link rel="stylesheet" href="style.css">', f"<style>\n{css}</style>",
                        "the style sheet link")
    icon = "data:image/svg+xml;base64," + base64.b64encode(read("icon.svg").encode()).decode()
    html = replace_once(html, r'<link rel="icon" href="icon.svg"[^>]*>',
                        f'<link rel="icon" href="{icon}" type="image/svg+xml">', "the icon link")
    boot = f"""<script type="importmap">{json.dumps({"imports": imports})}</script>
  <script type="application/octet-stream" id="sillage-wasm">{wasm_b64}</script>{data_block}
  <script>
    // The core's wasm bytes, the worker script and any embedded data file, for core.js,
    // compute/pool.js and io/sharing.js.
    (() => {{
      const bytes = (id) => {{
        const block = document.getElementById(id);
        if (!block) return null;
        const text = atob(block.textContent.trim());
        const out = new Uint8Array(text.length);
        for (let i = 0; i < text.length; i += 1) out[i] = text.charCodeAt(i);
        return out;
      }};
      globalThis.sillageEmbedded = {{
        ...{json.dumps(embedded)}, wasm: bytes('sillage-wasm'), data: bytes('sillage-data'),
      }};
    }})();
  </script>
  <script type="module">import '{PREFIX}{ENTRY}';</script>"""
    html = replace_once(html, r'<script type="module" src="main.js"></script>', boot,
                        "the main.js <script> tag")
    html = html.replace(
        "<title>sillage · velocity fields</title>",
        "<title>sillage · velocity fields (single file)</title>",
    )
    os.makedirs(os.path.dirname(out_path), exist_ok=True)
    tmp = out_path + ".tmp"
    with open(tmp, "w", encoding="utf-8") as f:
        f.write(html)
    os.replace(tmp, out_path)
    return len(html.encode("utf-8")), len(modules)


def main():
    ap = argparse.ArgumentParser(description="Write the page as one self-contained HTML file.")
    ap.add_argument("--out", default=os.path.join(WWW, "dist", "sillage-standalone.html"))
    ap.add_argument("--data", help="a data file to embed and open on start (e.g. a reduced model)")
    args = ap.parse_args()
    size, count = build(os.path.abspath(args.out), args.data and os.path.abspath(args.data))
    print(f"build-single.py: {args.out}: {size / 1e6:.2f} MB ({count} modules and the wasm core inlined)")


if __name__ == "__main__":
    main()
