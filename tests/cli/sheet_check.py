"""sheet_check.py: checks of the domain sheets for tests/cli/cli_sheet.sh (run with /usr/bin/python3).

  html FILE...            strict structure check with html.parser: every tag closed in order, void
                          elements only where HTML allows them, no scripts, event handlers, external
                          resources or links outside the folder; prints one line per problem
  split FILE OUTDIR       writes each inline <svg> as OUTDIR/N.svg and the page without them as
                          OUTDIR/page.html; prints the number of SVGs
  links INDEX             prints the relative href of every link in an index page, one a line
  compare CSV JSON        the same CP, W' and boundaries in the sheet's CSV and JSON; prints problems
  nonfinite FILE...       prints every 'nan' or 'inf' word found (printf's spellings of NaN and infinity)
  png FILE                prints "WIDTH HEIGHT COLOURS" of a PNG (decoded with zlib)
  svgs FILE...            every <svg>...</svg> of each HTML or SVG file, cut out as a simple consumer
                          would (the first </svg> closes it), parsed as XML, with no <svg> nested
                          and every label inside the picture; prints one line per problem, then
                          "svgs N" with the count checked
  summary FILE OUT SIZE    the sheet's first section alone (the details cut out) with @page size SIZE
                          (A4 or letter), for a PDF page count
  pdfpages FILE           prints the number of pages of a PDF (its /Type /Page objects)
  phone FILE OUT          a page that shows FILE in a 390 px wide frame and, once loaded, writes into
                          its title "overflow N" with N elements reaching past the frame's width
  domaincolours FILE      prints the page's domain swatch colours (.d0 .. .d3) on one line and the
                          fills of the opaque domain bands of its power-duration plot on the next
"""
import csv
import html.parser
import json
import math
import os
import re
import struct
import sys
import zlib

VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}
# SVG elements svgplot writes; inside <svg> an element may close itself (XML syntax)
SVG = {"svg", "title", "desc", "g", "path", "rect", "circle", "line", "polyline", "polygon", "text", "tspan",
       "defs", "clippath", "use"}


class Strict(html.parser.HTMLParser):
    def __init__(self, name):
        super().__init__(convert_charrefs=True)
        self.name = name
        self.stack = []
        self.problems = []
        self.counts = {}

    def bad(self, what):
        line, col = self.getpos()
        self.problems.append("%s:%d:%d: %s" % (self.name, line, col + 1, what))

    def check_attrs(self, tag, attrs):
        for k, v in attrs:
            if k.startswith("on"):
                self.bad("event handler attribute %s on <%s>" % (k, tag))
            if k in ("src", "srcset", "data", "action", "formaction"):
                self.bad("resource attribute %s on <%s>" % (k, tag))
            if k in ("href", "xlink:href"):
                if v is None or re.match(r"^\s*([a-z][a-z0-9+.-]*:|//)", v, re.I) or v.startswith("/") or ".." in v:
                    self.bad("link leaves the folder: %r" % v)
            if k == "style" and v and ("url(" in v or "expression(" in v):
                self.bad("style with a resource on <%s>" % tag)

    def handle_starttag(self, tag, attrs):
        self.counts[tag] = self.counts.get(tag, 0) + 1
        if tag in ("script", "iframe", "object", "embed", "link", "img", "base", "form", "frame"):
            self.bad("forbidden element <%s>" % tag)
        self.check_attrs(tag, attrs)
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.counts[tag] = self.counts.get(tag, 0) + 1
        self.check_attrs(tag, attrs)
        if tag not in VOID and not ("svg" in self.stack and tag in SVG):
            self.bad("<%s/> closes itself outside SVG" % tag)

    def handle_endtag(self, tag):
        if tag in VOID:
            self.bad("end tag of void element </%s>" % tag)
            return
        if not self.stack:
            self.bad("</%s> with nothing open" % tag)
            return
        if self.stack[-1] != tag:
            self.bad("</%s> closes <%s>" % (tag, self.stack[-1]))
            if tag in self.stack:
                while self.stack and self.stack[-1] != tag:
                    self.stack.pop()
                self.stack.pop()
            return
        self.stack.pop()

    def finish(self):
        self.close()
        if self.stack:
            self.bad("unclosed at the end: %s" % " ".join(self.stack))
        for tag in ("html", "head", "body"):
            if self.counts.get(tag, 0) != 1:
                self.bad("%d <%s> elements" % (self.counts.get(tag, 0), tag))
        return self.problems


def cmd_html(files):
    problems = []
    for f in files:
        with open(f, encoding="utf-8") as fh:
            text = fh.read()
        if not text.startswith("<!DOCTYPE html>"):
            problems.append("%s: no <!DOCTYPE html> first" % f)
        if '<meta charset="utf-8">' not in text:
            problems.append("%s: no utf-8 charset" % f)
        p = Strict(f)
        p.feed(text)
        problems += p.finish()
    for q in problems:
        print(q)



def top_level_svgs(text):
    """The outermost <svg>...</svg> elements, nesting counted (a two-panel chart nests two <svg>)."""
    out, depth, start = [], 0, 0
    for m in re.finditer(r"<svg\b|</svg>", text):
        if m.group(0).startswith("<svg"):
            if depth == 0:
                start = m.start()
            depth += 1
        elif depth:
            depth -= 1
            if depth == 0:
                out.append(text[start:m.end()])
    return out

def cmd_split(path, outdir):
    with open(path, encoding="utf-8") as fh:
        text = fh.read()
    svgs = top_level_svgs(text)
    for i, s in enumerate(svgs):
        with open(os.path.join(outdir, "%d.svg" % i), "w", encoding="utf-8") as fh:
            fh.write(s)
    with open(os.path.join(outdir, "page.html"), "w", encoding="utf-8") as fh:
        for piece in svgs:
            text = text.replace(piece, "", 1)
        fh.write(text)
    print(len(svgs))


class Links(html.parser.HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.hrefs = []

    def handle_starttag(self, tag, attrs):
        if tag == "a":
            self.hrefs += [v for k, v in attrs if k == "href"]


def cmd_links(index):
    p = Links()
    with open(index, encoding="utf-8") as fh:
        p.feed(fh.read())
    for h in p.hrefs:
        print(h)


def cmd_compare(csv_path, json_path):
    rows = {}
    with open(csv_path, newline="", encoding="utf-8") as fh:
        r = csv.reader(fh)
        head = next(r)
        if head != ["section", "item", "key", "value", "unit"]:
            print("bad CSV header %r" % head)
        for rec in r:
            if len(rec) != 5:
                print("CSV record with %d fields: %r" % (len(rec), rec))
                continue
            rows[(rec[0], rec[1], rec[2])] = rec[3]
    with open(json_path, encoding="utf-8") as fh:
        d = json.load(fh)
    spd = d["modality"] == "speed"
    cp, wp = ("cs", "d_prime") if spd else ("cp", "w_prime")
    ikey = "speed_m_s" if spd else "power_w"
    pairs = [(("fit", "", cp), d["fit"][cp]), (("fit", "", wp), d["fit"][wp])]
    for b in d["domains"]["boundaries"]:
        pairs.append((("boundary", b["name"], "value"), b[ikey]))
    for key, jv in pairs:
        cv = rows.get(key)
        if cv is None:
            print("no CSV row %s" % (key,))
        elif jv is None or cv == "":
            if not (jv is None and cv == ""):
                print("%s: CSV %r, JSON %r" % (key, cv, jv))
        elif not math.isclose(float(cv), jv, rel_tol=1e-9):  # CSV holds 10 significant digits
            print("%s: CSV %s, JSON %r" % (key, cv, jv))
    print("compared %d" % len(pairs))


def cmd_nonfinite(files):
    for f in files:
        with open(f, encoding="utf-8") as fh:
            for n, line in enumerate(fh, 1):
                for m in re.finditer(r"(?<![A-Za-z])(nan|inf)(?![A-Za-z])", line, re.I):
                    print("%s:%d: %s" % (f, n, m.group(0)))


def paeth(a, b, c):
    p = a + b - c
    pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
    if pa <= pb and pa <= pc:
        return a
    return b if pb <= pc else c


def cmd_png(path):
    with open(path, "rb") as fh:
        data = fh.read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        sys.exit("not a PNG")
    pos, idat, w, h, depth, ctype = 8, b"", 0, 0, 0, 0
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            w, h, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            if depth != 8 or ctype not in (2, 6) or interlace:
                sys.exit("unsupported PNG: depth %d colour type %d interlace %d" % (depth, ctype, interlace))
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    bpp = 3 if ctype == 2 else 4
    raw = zlib.decompress(idat)
    stride = w * bpp
    prev = bytearray(stride)
    colours = set()
    for y in range(h):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        if f == 1:
            for i in range(bpp, stride):
                line[i] = (line[i] + line[i - bpp]) & 255
        elif f == 2:
            line = bytearray((a + b) & 255 for a, b in zip(line, prev))
        elif f == 3:
            for i in range(stride):
                left = line[i - bpp] if i >= bpp else 0
                line[i] = (line[i] + ((left + prev[i]) >> 1)) & 255
        elif f == 4:
            for i in range(stride):
                left = line[i - bpp] if i >= bpp else 0
                up_left = prev[i - bpp] if i >= bpp else 0
                line[i] = (line[i] + paeth(left, prev[i], up_left)) & 255
        elif f != 0:
            sys.exit("bad PNG filter %d" % f)
        if y % 4 == 0:  # every fourth row is plenty to count colours
            colours.update(bytes(line[i:i + 3]) for i in range(0, stride, bpp))
        prev = line
    print(w, h, len(colours))


TRANSLATE = re.compile(r"translate\(\s*([-+0-9.eE]+)[ ,]+([-+0-9.eE]+)\s*\)")


def label_problems(el, w, h, dx=0.0, dy=0.0, fs=11.0):
    """Labels (<text>) whose estimated extent leaves the picture: 0.62 em per character, the
    average advance svgplot itself assumes."""
    m = TRANSLATE.search(el.get("transform") or "")
    if m:
        dx, dy = dx + float(m.group(1)), dy + float(m.group(2))
    if el.get("font-size"):
        fs = float(el.get("font-size"))
    out = []
    if el.tag.endswith("}text") and el.get("x") is not None:
        x, y = float(el.get("x")) + dx, float(el.get("y")) + dy
        tw = 0.62 * fs * len("".join(el.itertext()))
        anchor = el.get("text-anchor") or "start"
        lo = x - tw if anchor == "end" else x - tw / 2 if anchor == "middle" else x
        rot = "rotate" in (el.get("transform") or "")
        if not rot and (lo < -0.5 or lo + tw > w + 0.5 or y - fs < -0.5 or y > h + 0.5):
            out.append("label %r at %.0f,%.0f runs outside the %gx%g picture" % ("".join(el.itertext()), lo, y, w, h))
    for k in el:
        out += label_problems(k, w, h, dx, dy, fs)
    return out


def cmd_svgs(files):
    import xml.etree.ElementTree as ET
    n = 0
    for f in files:
        with open(f, encoding="utf-8") as fh:
            text = fh.read()
        for i, piece in enumerate(re.findall(r"<svg\b.*?</svg>", text, re.S)):
            n += 1
            where = "%s: SVG %d" % (f, i + 1)
            try:
                root = ET.fromstring(piece)
            except ET.ParseError as e:
                print("%s does not parse as XML: %s" % (where, e))
                continue
            if any(e.tag.endswith("}svg") for e in root.iter() if e is not root):
                print("%s nests an <svg>" % where)
            w, h = float(root.get("width")), float(root.get("height"))
            for q in label_problems(root, w, h):
                print("%s: %s" % (where, q))
    print("svgs %d" % n)


def cmd_domaincolours(path):
    with open(path, encoding="utf-8") as fh:
        text = fh.read()
    css = [re.search(r"\.d%d\{background:(#[0-9a-f]{6})\}" % k, text) for k in range(4)]
    print(" ".join(m.group(1) if m else "none" for m in css))
    svg = next((s for s in top_level_svgs(text) if "duration relationship" in s), "")
    fills = re.findall(r'<rect [^>]*fill="(#[0-9a-f]{6})" fill-opacity="1"', svg)
    print(" ".join(fills))


def cmd_summary(path, out, size):
    with open(path, encoding="utf-8") as fh:
        t = fh.read()
    a = t.index('<div class="details">')
    b = t.index("<!-- /details -->", a) + len("<!-- /details -->")
    t = t[:a] + t[b:]
    t = t.replace("</head>", "<style>@page{size:%s}</style></head>" % size)
    with open(out, "w", encoding="utf-8") as fh:
        fh.write(t)


def cmd_pdfpages(path):
    with open(path, "rb") as fh:
        print(len(re.findall(rb"/Type\s*/Page[^s]", fh.read())))


PHONE = """<!DOCTYPE html><html><head><meta charset="utf-8"><title>loading</title>
<style>body{margin:0}iframe{border:0;width:390px;height:2400px}</style></head><body>
<iframe id="f" src="%s"></iframe><script>
document.getElementById('f').onload = function () {
  var d = this.contentDocument, w = this.contentWindow, bad = [];
  d.querySelectorAll('*').forEach(function (e) {
    var r = e.getBoundingClientRect();
    if (r.width > 0 && r.right > w.innerWidth + 0.5) bad.push(e.tagName);
  });
  document.title = 'overflow ' + bad.length + ' scroll ' + (d.documentElement.scrollWidth > w.innerWidth ? 1 : 0) +
      ' ' + bad.slice(0, 5).join(',');
};
</script></body></html>
"""


def cmd_phone(path, out):
    with open(out, "w", encoding="utf-8") as fh:
        fh.write(PHONE % os.path.basename(path))


def main():
    cmd, args = sys.argv[1], sys.argv[2:]
    {"html": lambda: cmd_html(args), "split": lambda: cmd_split(*args), "links": lambda: cmd_links(*args),
     "compare": lambda: cmd_compare(*args), "nonfinite": lambda: cmd_nonfinite(args),
     "png": lambda: cmd_png(*args), "domaincolours": lambda: cmd_domaincolours(*args),
     "svgs": lambda: cmd_svgs(args),
     "summary": lambda: cmd_summary(*args), "pdfpages": lambda: cmd_pdfpages(*args), "phone": lambda: cmd_phone(*args)}[cmd]()


if __name__ == "__main__":
    main()
