"""page_dom -- reads a QC page's DOM, as dumped by headless Chromium, for the page tests.

Python's standard html.parser reads the dumped DOM (an independent HTML
reader); the checks compare what the browser holds with the QC report's JSON
(read with the json module). Usage: page_dom.py KIND DOM.html [ARGS...]
prints JSON of what it found; the shell test compares.
"""
import json
import sys
from html.parser import HTMLParser


class Dom(HTMLParser):
    def __init__(self):
        super().__init__()
        self.elements = []      # (tag, attrs dict, chart name of the enclosing svg)
        self.root_attrs = {}
        self.chart = None
        self.text = {}          # id -> text
        self.cur_id = None
        self.rows = []          # survey: tr attrs
        self.scripts_json = {}

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "html":
            self.root_attrs = a
        if tag == "svg" and "data-chart" in a:
            self.chart = a["data-chart"]
        self.elements.append((tag, a, self.chart))
        if "id" in a:
            self.cur_id = a["id"]
            self.text.setdefault(a["id"], "")
        if tag == "tr":
            self.rows.append(a)

    def handle_endtag(self, tag):
        if tag == "svg":
            self.chart = None

    def handle_data(self, data):
        if self.cur_id:
            self.text[self.cur_id] += data


def load(path):
    d = Dom()
    with open(path, encoding="utf-8") as fh:
        d.feed(fh.read())
    return d


def main():
    kind, path = sys.argv[1], sys.argv[2]
    d = load(path)
    out = {"js_error": d.root_attrs.get("data-js-error"), "ready": d.root_attrs.get("data-ready")}
    charts = {}
    for tag, a, chart in d.elements:
        if tag == "svg" and "data-chart" in a:
            charts[a["data-chart"]] = {k: a[k] for k in a if k.startswith("data-")}
    out["charts"] = charts
    if kind == "line" or kind == "compare":
        fold = {}
        series = {}
        for tag, a, chart in d.elements:
            if tag == "rect" and chart == "fold" and "data-fold" in a:
                fold[a["data-cmp"]] = float(a["data-fold"])
            if tag == "rect" and chart and "data-value" in a:
                series.setdefault(chart, {})[a["data-cmp"]] = float(a["data-value"])
        out["fold"] = fold
        out["series"] = series
        out["info"] = d.text.get("cmp-info", "")
        out["info_cmp"] = next((a.get("data-cmp") for t, a, c in d.elements
                                if a.get("id") == "cmp-info"), None)
        out["thumbnail"] = next(({k: a[k] for k in a if k != "src"} for t, a, c in d.elements
                                 if a.get("id") == "thumbnail" or (t == "img" and "data-cmp0" in a)),
                                None)
        out["images"] = [a.get("src", "")[:22] for t, a, c in d.elements if t == "img"]
        out["warnings"] = [a for t, a, c in d.elements if t == "li" and "data-source" in a]
        out["links"] = [a["href"] for t, a, c in d.elements if t == "a" and "href" in a]
        out["external"] = [a.get("src") or a.get("href") for t, a, c in d.elements
                           if t in ("script", "link", "img", "iframe") and
                           (a.get("src") or a.get("href") or "data:").split(":")[0] not in ("data",)]
    if kind == "survey":
        out["rows"] = [r for r in d.rows if "data-report" in r]
        out["links"] = [a["href"] for t, a, c in d.elements if t == "a" and "href" in a]
        out["sorted"] = [a.get("data-dir") for t, a, c in d.elements if t == "th"]
    print(json.dumps(out))


main()
