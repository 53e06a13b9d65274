"""Serve www/ on 127.0.0.1 with the two headers that make the page cross-origin isolated.

Cross-Origin-Opener-Policy: same-origin and Cross-Origin-Embedder-Policy: require-corp let the browser give the
page SharedArrayBuffer, so its workers share one copy of the decoded data (www/js/workers.js). The page loads only
its own files, so requiring them to be same-origin costs nothing. Any static host that sends these two headers
gives the same; without them the page still works, each worker holding its own copy.
"""
import functools
import http.server
import sys


class Isolated(http.server.SimpleHTTPRequestHandler):
    def end_headers(self):
        self.send_header("Cross-Origin-Opener-Policy", "same-origin")
        self.send_header("Cross-Origin-Embedder-Policy", "require-corp")
        super().end_headers()


if __name__ == "__main__":
    port, directory = int(sys.argv[1]), sys.argv[2]
    handler = functools.partial(Isolated, directory=directory)
    http.server.ThreadingHTTPServer(("127.0.0.1", port), handler).serve_forever()
