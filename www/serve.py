#!/usr/bin/env python3
"""Serves the sillage page on the loopback interface, with the Python standard library only.

    python3 www/serve.py [--port PORT] [--demo-dir DIR] [--quiet]

* www/ is the site root; /demo/ maps to the repository's demo-fields/ folder (or --demo-dir).
* .wasm goes out as application/wasm (browsers compile it while it downloads only then),
  .js and .mjs as text/javascript.
* Every response carries the Content-Security-Policy written in index.html's <meta> tag,
  read from that file so the two cannot drift apart: the header also covers what a <meta>
  policy cannot (workers started from same-origin URLs).
* Binds to 127.0.0.1 only. Port 0 picks a free port; the first line printed is the URL.
"""

import argparse
import functools
import html.parser
import http.server
import os
import sys

WWW = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(WWW)


class _MetaCsp(html.parser.HTMLParser):
    """Finds <meta http-equiv="Content-Security-Policy" content="...">."""

    def __init__(self):
        super().__init__()
        self.policy = None

    def handle_starttag(self, tag, attrs):
        a = {k.lower(): (v or "") for k, v in attrs}
        if tag == "meta" and a.get("http-equiv", "").lower() == "content-security-policy":
            self.policy = a.get("content", "").strip()


def page_policy(index_path):
    parser = _MetaCsp()
    with open(index_path, encoding="utf-8") as f:
        parser.feed(f.read())
    if not parser.policy:
        sys.exit(f"serve.py: no Content-Security-Policy <meta> tag in {index_path}")
    return parser.policy


class Handler(http.server.SimpleHTTPRequestHandler):
    extensions_map = {
        **http.server.SimpleHTTPRequestHandler.extensions_map,
        ".wasm": "application/wasm",
        ".js": "text/javascript",
        ".mjs": "text/javascript",
        ".css": "text/css",
        ".html": "text/html; charset=utf-8",
        ".svg": "image/svg+xml",
        ".json": "application/json",
        ".npz": "application/octet-stream",
        ".npy": "application/octet-stream",
    }

    def __init__(self, *args, policy, demo_dir, quiet, **kwargs):
        self.policy = policy
        self.demo_dir = demo_dir
        self.quiet = quiet
        super().__init__(*args, directory=WWW, **kwargs)

    def translate_path(self, path):
        # /demo/... is served from the demo folder with the same path sanitising as www/.
        bare = path.split("?", 1)[0].split("#", 1)[0]
        if bare == "/demo" or bare.startswith("/demo/"):
            saved = self.directory
            self.directory = self.demo_dir
            try:
                return super().translate_path(path[len("/demo"):] or "/")
            finally:
                self.directory = saved
        return super().translate_path(path)

    def list_directory(self, path):
        self.send_error(404, "No listing here")
        return None

    def end_headers(self):
        self.send_header("Content-Security-Policy", self.policy)
        self.send_header("X-Content-Type-Options", "nosniff")
        # Development server: always revalidate, so a rebuilt module is picked up at once.
        self.send_header("Cache-Control", "no-cache")
        super().end_headers()

    def log_message(self, fmt, *args):
        if not self.quiet:
            super().log_message(fmt, *args)


def main():
    ap = argparse.ArgumentParser(description="Serve the sillage page on 127.0.0.1.")
    ap.add_argument("--port", type=int, default=8000, help="port (0 = any free port)")
    ap.add_argument("--demo-dir", default=os.path.join(ROOT, "demo-fields"),
                    help="folder served under /demo/ (default: demo-fields/)")
    ap.add_argument("--quiet", action="store_true", help="do not log each request")
    args = ap.parse_args()
    if not os.path.exists(os.path.join(WWW, "pkg", "sillage.js")):
        print("serve.py: www/pkg is missing: run `bash www/build.sh` first", file=sys.stderr)
    handler = functools.partial(
        Handler,
        policy=page_policy(os.path.join(WWW, "index.html")),
        demo_dir=os.path.abspath(args.demo_dir),
        quiet=args.quiet,
    )
    try:
        server = http.server.ThreadingHTTPServer(("127.0.0.1", args.port), handler)
    except OSError as e:
        sys.exit(f"serve.py: cannot listen on 127.0.0.1:{args.port}: {e.strerror}")
    port = server.server_address[1]
    print(f"sillage page: http://127.0.0.1:{port}/  (Ctrl-C stops)", flush=True)
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        pass
    finally:
        server.server_close()


if __name__ == "__main__":
    main()
