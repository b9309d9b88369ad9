#!/usr/bin/env python3
"""Renders the demo's review page (`tacet report`) in headless Chromium (Debian's
chromium package, installed by .ci/deps.sh) and checks that the screenshot is
not blank and that the page logs nothing to the browser console.

The console capture is checked first on a control page that logs an error on
purpose, so that a Chromium that reports nothing cannot make the check pass.
The PNG is read with the standard library (zlib and the PNG filters of the
W3C PNG specification, section 9), so the check needs no imaging package.
Also: the page of a git revision (REV:path) and with --set overrides.

Usage: report_browser_check.py PATH_TO_TACET
"""
import os
import shutil
import struct
import subprocess
import sys
import tempfile
import zlib

DEMO = "netlists/vibration_logger.tacet"


def chromium():
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    sys.exit("no chromium on PATH: install Debian's chromium (bash .ci/deps.sh)")


def render(page, png, width=1100, height=2400):
    """Screenshot of `page`; returns the console lines Chromium logged."""
    done = subprocess.run(
        [chromium(), "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
         "--enable-logging=stderr", "--log-level=0", f"--window-size={width},{height}",
         f"--screenshot={png}", "file://" + os.path.abspath(page)],
        capture_output=True, text=True, timeout=120)
    if not os.path.exists(png):
        sys.exit(f"chromium wrote no screenshot ({done.returncode}): {done.stderr[-2000:]}")
    return [line for line in done.stderr.splitlines() if ":CONSOLE" in line]


def png_pixels(path):
    """(width, height, rows of RGB(A) bytes) of an 8-bit, non-interlaced PNG."""
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    pos, idat, header = 8, b"", None
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    width, height, depth, colour, _, _, interlace = header
    assert depth == 8 and interlace == 0 and colour in (2, 6), header
    channels = 3 if colour == 2 else 4
    raw, stride, rows, previous = zlib.decompress(idat), width * channels, [], bytearray(width * channels)
    for y in range(height):
        kind, line = raw[y * (stride + 1)], bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            left = line[i - channels] if i >= channels else 0
            up, corner = previous[i], previous[i - channels] if i >= channels else 0
            if kind == 1:
                line[i] = (line[i] + left) & 255
            elif kind == 2:
                line[i] = (line[i] + up) & 255
            elif kind == 3:
                line[i] = (line[i] + (left + up) // 2) & 255
            elif kind == 4:
                p = left + up - corner
                pa, pb, pc = abs(p - left), abs(p - up), abs(p - corner)
                line[i] = (line[i] + (left if pa <= pb and pa <= pc else up if pb <= pc else corner)) & 255
        rows.append(bytes(line))
        previous = line
    return width, height, channels, rows


def ink(path):
    """The fraction of pixels that are not white, and the number of distinct colours."""
    width, height, channels, rows = png_pixels(path)
    inked, colours = 0, set()
    for row in rows[::4]:  # every fourth row is plenty for a page
        for x in range(0, width * channels, channels):
            rgb = row[x:x + 3]
            colours.add(rgb)
            if rgb != b"\xff\xff\xff":
                inked += 1
    return inked / (width * len(rows[::4])), len(colours)


def tacet_report(tacet, folder, *args):
    target = os.path.join(folder, "report.html")
    done = subprocess.run([tacet, "report", *args, "--output", target], capture_output=True, text=True)
    if done.returncode != 0:
        sys.exit(f"tacet report {' '.join(args)} failed ({done.returncode}): {done.stderr}")
    return target, open(target, encoding="utf-8").read()


def main():
    tacet = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as folder:
        control = os.path.join(folder, "control.html")
        with open(control, "w") as f:
            f.write('<!DOCTYPE html><p>control</p><script>console.error("control error")</script>\n')
        assert any("control error" in line for line in render(control, os.path.join(folder, "c.png"))), \
            "chromium's console is not captured: the check below could not see an error"

        page, html = tacet_report(tacet, folder, DEMO)
        assert "11 specs: 11 pass, 0 fail" in html
        png = os.path.join(folder, "report.png")
        console = render(page, png)
        assert not console, "the page logged to the console:\n" + "\n".join(console)
        share, colours = ink(png)
        assert share > 0.03 and colours > 20, f"the page looks blank: {share:.3%} inked, {colours} colours"

        _, html = tacet_report(tacet, folder, "HEAD:" + DEMO)
        assert "HEAD:" + DEMO in html, "the page does not name the revision it shows"
        _, html = tacet_report(tacet, folder, DEMO, "--set", "gain=12")
        assert '<td class="fail">FAIL</td>' in html, "--set gain=12 should fail gain_1k"
    print(f"report page: rendered, {share:.1%} of the screenshot inked, {colours} colours, "
          "no console messages; REV:path and --set pages written")


if __name__ == "__main__":
    main()
