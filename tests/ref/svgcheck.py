# svgcheck.py: parses an SVG with Python's xml.etree (a real XML parser: malformed input raises)
# and prints, one per line, facts about it that test_svgplot.c checks. "null" marks an absent value.
import re
import sys
import xml.etree.ElementTree as ET

NS = "{http://www.w3.org/2000/svg}"
NUM = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")
BAD = re.compile(r"nan|inf", re.IGNORECASE)


def main(path):
    root = ET.parse(path).getroot()
    out = {}
    out["root_ok"] = 1 if root.tag == NS + "svg" else 0
    w, h = root.get("width"), root.get("height")
    out["width"] = float(w) if w else None
    out["height"] = float(h) if h else None
    out["viewbox_ok"] = 1 if root.get("viewBox") == "0 0 %s %s" % (w, h) else 0
    out["role_ok"] = 1 if root.get("role") == "img" else 0
    kids = list(root)
    out["title_first"] = 1 if kids and kids[0].tag == NS + "title" and (kids[0].text or "") != "" else 0

    area = [e for e in root.iter(NS + "rect") if e.get("class") == "cpd-plot-area"]
    for k in ("x", "y", "width", "height"):
        out["area_" + k] = float(area[0].get(k)) if len(area) == 1 else None

    data = [g for g in root.iter(NS + "g") if g.get("class") == "cpd-data"]
    circles, rects, paths = [], [], []
    for g in data:
        circles += list(g.iter(NS + "circle"))
        rects += list(g.iter(NS + "rect"))
        paths += list(g.iter(NS + "path"))
    out["n_circle"] = len(circles)
    out["n_rect"] = len(rects)
    out["n_path"] = len(paths)
    xs, ys, moves = [], [], 0
    for p in paths:
        d = p.get("d")
        moves += d.count("M")
        v = [float(t) for t in NUM.findall(d)]
        if len(v) % 2:
            raise SystemExit("odd number of path coordinates")
        xs += v[0::2]
        ys += v[1::2]
    out["n_pairs"] = len(xs)
    out["n_moves"] = moves
    for name, vals in (("px", xs), ("py", ys)):
        out[name + "_min"] = min(vals) if vals else None
        out[name + "_max"] = max(vals) if vals else None
    cx = [float(c.get("cx")) for c in circles]
    cy = [float(c.get("cy")) for c in circles]
    for name, vals in (("cx", cx), ("cy", cy)):
        out[name + "_min"] = min(vals) if vals else None
        out[name + "_max"] = max(vals) if vals else None

    out["n_text"] = len(list(root.iter(NS + "text")))
    legend = [g for g in root.iter(NS + "g") if g.get("class") == "cpd-legend"]
    out["n_legend_text"] = sum(len(list(g.iter(NS + "text"))) for g in legend)
    bad = 0
    for e in root.iter():
        for k, v in e.attrib.items():
            if BAD.search(v):
                bad += 1
    out["bad_attr"] = bad

    for k, v in out.items():
        print("null" if v is None else repr(float(v)))


if __name__ == "__main__":
    main(sys.argv[1])
