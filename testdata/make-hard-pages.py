#!/usr/bin/python3
"""make-hard-pages.py: draws the two page layouts of lineate's hard-page test, with their truth.

hard-2col.png  annual report of an invented boat club: running head, title, two columns, a
               heading spanning both columns halfway down, a figure breaking the left column
               with its caption, a margin note, a footnote under a short rule, page number.
hard-3col.png  winter bulletin of an invented beekeepers' circle: running head, title, three
               columns with headings, a bulleted list with hanging indents, a footnote under a
               short rule at the foot of the third column, a page footer and a page number.

Text is drawn with DejaVu Serif (Debian package fonts-dejavu-core) by python3-pil at 300 dpi
on US letter (2550 x 3300 px), 8-bit gray. NAME.truth.json lists every text line in the order
a reader follows, with its ink box (measured on the drawn pixels), its text, and the role of
the block it belongs to; and the boxes of the pictures. The text is invented for lineate's
tests. Usage: /usr/bin/python3 testdata/make-hard-pages.py  (writes next to this script).
"""
import json
import os
import sys

from PIL import Image, ImageDraw, ImageFont

HERE = os.path.dirname(os.path.abspath(__file__))
FONTS = "/usr/share/fonts/truetype/dejavu/"
W, H = 2550, 3300


def font(size, style=""):
    return ImageFont.truetype(FONTS + "DejaVuSerif%s.ttf" % style, size)


class Page:
    def __init__(self, name):
        self.name = name
        self.img = Image.new("L", (W, H), 255)
        self.draw = ImageDraw.Draw(self.img)
        self.lines = []
        self.pictures = []

    def text(self, x, y, s, f, role):
        """Draws one line with its top-left at (x, y); records its ink box."""
        l, t, r, b = self.draw.textbbox((x, y), s, font=f)
        scratch = Image.new("L", (r - l + 8, b - t + 8), 0)
        ImageDraw.Draw(scratch).text((x - l + 4, y - t + 4), s, font=f, fill=255)
        bl, bt, br, bb = scratch.getbbox()
        self.draw.text((x, y), s, font=f, fill=0)
        box = [l - 4 + bl, t - 4 + bt, l - 4 + br, t - 4 + bb]
        self.lines.append({"text": s, "box": box, "role": role})
        return box

    def wrap(self, words, f, width):
        out, cur = [], ""
        for w in words.split():
            trial = (cur + " " + w).strip()
            if cur and self.draw.textlength(trial, font=f) > width:
                out.append(cur)
                cur = w
            else:
                cur = trial
        if cur:
            out.append(cur)
        return out

    def paragraph(self, x, y, width, words, f, pitch, role="body"):
        """Ragged-right paragraph; returns the y after it."""
        for line in self.wrap(words, f, width):
            self.text(x, y, line, f, role)
            y += pitch
        return y

    def bullet(self, x, y, width, words, f, pitch, indent):
        """List item: a bullet, then the text with a hanging indent; returns the y after it."""
        lines = self.wrap(words, f, width - indent)
        for k, line in enumerate(lines):
            self.text(x + indent, y, line, f, "list-item")
            if k == 0:  # the bullet joins the first line: widen its box
                l, t, r, b = self.draw.textbbox((x, y), "\u2022", font=f)
                self.draw.text((x, y), "\u2022", font=f, fill=0)
                box = self.lines[-1]["box"]
                self.lines[-1]["text"] = "\u2022 " + line
                box[0] = min(box[0], l)
            y += pitch
        return y

    def rule(self, x0, y, x1, thick=4):
        self.draw.rectangle([x0, y, x1 - 1, y + thick - 1], fill=0)

    def picture(self, box):
        """A drawn picture: a dark frame with a landscape of bands (one ink component)."""
        l, t, r, b = box
        self.draw.rectangle([l, t, r - 1, b - 1], fill=40)
        for k, y in enumerate(range(t + 40, b - 40, 60)):
            self.draw.rectangle([l + 30, y, r - 31, y + 25], fill=150 + 20 * (k % 3))
        self.draw.ellipse([r - 260, t + 60, r - 120, t + 200], fill=230)
        self.pictures.append(list(box))

    def save(self):
        self.img.save(os.path.join(HERE, self.name + ".png"), dpi=(300, 300))
        truth = {"image": self.name + ".png", "width": W, "height": H,
                 "lines": self.lines, "pictures": self.pictures}
        with open(os.path.join(HERE, self.name + ".truth.json"), "w") as fh:
            json.dump(truth, fh, indent=1)
            fh.write("\n")


BODY = font(40)
SMALL = font(32)
HEAD = font(54, "-Bold")
TITLE = font(84, "-Bold")
RUNNING = font(32, "-Italic")
PITCH, SMALL_PITCH = 52, 42

TEXT_2COL = [
    "The club ended its hundred and twelfth year with more members than boats, which the "
    "committee counts as a good problem. Forty-one new members joined in spring, most of them "
    "from the evening courses that ran on Tuesdays from April until the first frost.",
    "Work on the slipway took most of the summer. The old timber ramp was lifted in June, the "
    "bed was levelled with crushed stone, and the new concrete planks were laid by a crew of "
    "eleven volunteers over three long weekends.",
    "Racing had a fine season. The four crews entered the valley regatta and came home with "
    "two pennants, a dented trophy and a story about the lock gates that grows at every "
    "telling.",
    "The winter programme starts in November with talks in the clubroom on the first Friday "
    "of each month. Tea is free; biscuits are not.",
]
TEXT_2COL_LOW = [
    "Income rose by a tenth, mostly from the new mooring fees and from the hire of the "
    "clubroom for three weddings and a choir.",
    "Spending went on the slipway, on two second-hand launch trolleys and on the long-awaited "
    "repair of the boathouse roof, which no longer lets the rain onto the racks.",
    "The reserve now stands at a level the treasurer calls comfortable, and the committee "
    "proposes to keep the subscription unchanged for the coming year.",
    "Members who wish to see the full ledger may ask the treasurer at any club night; the "
    "books are kept in the cupboard behind the bar.",
]


def two_column():
    p = Page("hard-2col")
    left, gutter, colw = 200, 90, 880
    right_x = left + colw + gutter
    p.text(left, 120, "Weir Street Boat Club \u2014 Annual Report 2026", RUNNING, "page-header")
    p.text(left, 260, "The Year on the Water", TITLE, "heading")
    y0 = 440
    # upper section: left column, then right column
    y = y0
    p.text(left, y, "From the Captain", HEAD, "heading")
    y += 90
    y = p.paragraph(left, y, colw, TEXT_2COL[0], BODY, PITCH) + 30
    y = p.paragraph(left, y, colw, TEXT_2COL[1], BODY, PITCH)
    bottom = y
    y = y0
    p.text(right_x, y, "Racing", HEAD, "heading")
    y += 90
    y = p.paragraph(right_x, y, colw, TEXT_2COL[2], BODY, PITCH) + 30
    note_y = y
    y = p.paragraph(right_x, y, colw, TEXT_2COL[3], BODY, PITCH)
    # margin note beside the last paragraph of the right column
    for k, s in enumerate(["Talks list:", "ask the", "secretary"]):
        p.text(right_x + colw + 70, note_y + k * SMALL_PITCH, s, SMALL, "margin-note")
    bottom = max(bottom, y)
    # heading spanning both columns
    mid = bottom + 90
    p.text(left + 420, mid, "Part Two: The Accounts", font(64, "-Bold"), "heading")
    y0 = mid + 150
    # lower section, left column: paragraph, figure, caption, paragraph
    y = p.paragraph(left, y0, colw, TEXT_2COL_LOW[0], BODY, PITCH) + 40
    p.picture((left, y, left + colw, y + 560))
    y += 560 + 30
    y = p.paragraph(left, y, colw, "Figure 1. The new slipway at low water, seen from the "
                    "footbridge in September.", SMALL, SMALL_PITCH, "caption") + 40
    y = p.paragraph(left, y, colw, TEXT_2COL_LOW[1], BODY, PITCH)
    # lower section, right column: two paragraphs, footnote under a short rule
    y = p.paragraph(right_x, y0, colw, TEXT_2COL_LOW[2], BODY, PITCH) + 30
    y = p.paragraph(right_x, y, colw, TEXT_2COL_LOW[3], BODY, PITCH)
    foot_y = 2870
    p.rule(right_x, foot_y, right_x + 260)
    p.paragraph(right_x, foot_y + 30, colw, "* Figures are rounded to the nearest pound and "
                "were checked by two members at the October meeting.", SMALL, SMALL_PITCH,
                "footnote")
    p.text(1255, 3100, "7", BODY, "page-number")
    p.save()


TEXT_3COL = {
    "honey": "The honey show drew entries from nineteen apiaries this year. The judges praised "
             "the clear spring honey from the orchard hives and asked for more cut comb.",
    "honey2": "Next year the show moves to the village hall, which has better light and a "
              "kitchen for the tasting table.",
    "list_intro": "Winter jobs for every member:",
    "items": ["Check the hive weight after each hard frost.",
              "Clear dead bees from the entrance on mild days.",
              "Order frames and foundation before February.",
              "Clean and store the extractor."],
    "swarm": "The swarm list for the coming season is open. Members who can collect a swarm at "
             "short notice should give the secretary a telephone number and the days they are "
             "free.",
    "swarm2": "Boxes, veils and a ladder are kept in the shed at the allotments; the key hangs "
              "in the usual place.",
}


def three_column():
    p = Page("hard-3col")
    left, gutter, colw = 200, 85, 660
    xs = [left + k * (colw + gutter) for k in range(3)]
    p.text(1420, 120, "Circle of Valley Beekeepers \u00b7 Winter 2026", RUNNING, "page-header")
    p.text(left, 250, "Notes from the Apiary", TITLE, "heading")
    y0 = 430
    y = y0
    p.text(xs[0], y, "Honey show", HEAD, "heading")
    y += 90
    y = p.paragraph(xs[0], y, colw, TEXT_3COL["honey"], BODY, PITCH) + 30
    p.paragraph(xs[0], y, colw, TEXT_3COL["honey2"], BODY, PITCH)
    y = y0
    p.text(xs[1], y, "Winter work", HEAD, "heading")
    y += 90
    y = p.paragraph(xs[1], y, colw, TEXT_3COL["list_intro"], BODY, PITCH) + 30
    for item in TEXT_3COL["items"]:
        y = p.bullet(xs[1], y, colw, item, BODY, PITCH, 50) + 30
    y = y0
    p.text(xs[2], y, "Swarms", HEAD, "heading")
    y += 90
    y = p.paragraph(xs[2], y, colw, TEXT_3COL["swarm"], BODY, PITCH) + 30
    p.paragraph(xs[2], y, colw, TEXT_3COL["swarm2"], BODY, PITCH)
    foot_y = 2860
    p.rule(xs[2], foot_y, xs[2] + 220)
    p.paragraph(xs[2], foot_y + 30, colw, "* The shed key is also kept by the treasurer.",
                SMALL, SMALL_PITCH, "footnote")
    p.text(left, 3110, "Printed for members of the Circle", RUNNING, "page-footer")
    p.text(2290, 3105, "12", BODY, "page-number")
    p.save()


if __name__ == "__main__":
    if not os.path.exists(FONTS + "DejaVuSerif.ttf"):
        sys.exit("make-hard-pages.py: needs the DejaVu fonts (package fonts-dejavu-core)")
    two_column()
    three_column()
