"""Issue 10: the images of `stillpoint plot` opened by outside readers.

Usage: plots_check.py MANIFEST.json. The manifest lists
{"file", "width", "height", "title"} for every image written. Each PNG is
decoded by Pillow (the PNG decoder of the Python Imaging Library fork,
https://python-pillow.org; the format is the W3C/ISO 15948 PNG
specification): size as asked, 8-bit RGB, and more than a background — at
least 16 distinct colours and a share of non-white pixels. Each SVG is
parsed by Python's xml.etree (W3C SVG 1.1): the root is an <svg> element of
the asked width and height, it draws lines or rectangles, and its text
holds the title. Exits non-zero on the first disagreement.
"""

import json
import sys
import xml.etree.ElementTree as ET

from PIL import Image

SVG = "{http://www.w3.org/2000/svg}"


def check_png(item):
    with Image.open(item["file"]) as im:
        im.verify()  # checksums and structure
    with Image.open(item["file"]) as im:
        assert im.format == "PNG", im.format
        assert im.size == (item["width"], item["height"]), (im.size, item)
        assert im.mode == "RGB", im.mode
        colours = im.getcolors(maxcolors=1 << 20)
        distinct = len(colours) if colours is not None else 1 << 20
        assert distinct >= 16, f"{item['file']}: only {distinct} colours"
        white = sum(n for n, c in (colours or []) if c == (255, 255, 255))
        total = im.size[0] * im.size[1]
        drawn = 1.0 - white / total
        assert drawn > 0.02, f"{item['file']}: {drawn:.3%} of the pixels drawn"


def check_svg(item):
    root = ET.parse(item["file"]).getroot()
    assert root.tag == SVG + "svg", root.tag
    assert int(root.get("width")) == item["width"], root.attrib
    assert int(root.get("height")) == item["height"], root.attrib
    tags = [e.tag[len(SVG):] for e in root.iter() if e.tag.startswith(SVG)]
    shapes = sum(tags.count(t) for t in ("line", "polyline", "rect", "polygon", "path"))
    assert shapes >= 10, f"{item['file']}: {shapes} shapes"
    texts = " ".join((e.text or "").strip() for e in root.iter(SVG + "text"))
    assert item["title"] in texts, f"{item['file']}: title {item['title']!r} not in {texts[:200]!r}"


def main():
    items = json.load(open(sys.argv[1]))
    assert items, "nothing to check"
    for item in items:
        if item["file"].endswith(".png"):
            check_png(item)
        else:
            check_svg(item)
    print(f"{len(items)} images read")


if __name__ == "__main__":
    main()
