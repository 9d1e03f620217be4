# palette_cvd.py: checks the intensity-domain ramp under simulated colour-vision deficiency with numpy.
# Input: one "#rrggbb" per line, the domain colours from moderate to extreme; then a line "ink #rrggbb"
# (the colour of the labels written on the bands). Prints four numbers:
#   1. the smallest CIELAB lightness step between neighbouring domains over normal vision and
#      simulated protanopia, deuteranopia and tritanopia (Machado, Oliveira & Fernandes 2009, IEEE
#      Trans Vis Comput Graph 15:1291, severity 1.0; matrices from memory of the paper's table);
#   2. 1 when lightness falls strictly from moderate to extreme in every one of the four views, else 0;
#   3. the smallest WCAG 2.1 contrast ratio (W3C 2018) between neighbouring domains in greyscale
#      (relative luminance, the value a black-and-white printer keeps);
#   4. the smallest WCAG 2.1 contrast ratio of the ink against any domain colour.
import sys

import numpy as np

SIM = {
    "normal": np.eye(3),
    "protanopia": np.array([[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
                            [-0.003882, -0.048116, 1.051998]]),
    "deuteranopia": np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                              [-0.011820, 0.042940, 0.968881]]),
    "tritanopia": np.array([[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602],
                            [0.004733, 0.691367, 0.303900]]),
}


def linear(hexcode):
    c = np.array([int(hexcode[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    # sRGB decoding, IEC 61966-2-1:1999
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def lightness(lin):
    # CIE 1976 L* from relative luminance Y (sRGB primaries, D65; CIE 15:2004)
    y = float(np.dot([0.2126, 0.7152, 0.0722], np.clip(lin, 0, 1)))
    f = np.cbrt(y) if y > 216 / 24389 else y * 24389 / 27 / 116 + 16 / 116
    return 116 * f - 16


def luminance(lin):
    return float(np.dot([0.2126, 0.7152, 0.0722], np.clip(lin, 0, 1)))


def contrast(a, b):
    hi, lo = max(a, b), min(a, b)
    return (hi + 0.05) / (lo + 0.05)


def main(path):
    ramp, ink = [], None
    for line in open(path):
        w = line.split()
        if not w:
            continue
        if w[0] == "ink":
            ink = linear(w[1])
        else:
            ramp.append(linear(w[0]))
    step, ordered = 1e9, 1
    for m in SIM.values():
        L = [lightness(m @ c) for c in ramp]
        d = -np.diff(L)
        step = min(step, float(d.min()))
        ordered &= int(bool(np.all(d > 0)))
    lum = [luminance(c) for c in ramp]
    grey = min(contrast(lum[i], lum[i + 1]) for i in range(len(lum) - 1))
    ink_c = min(contrast(luminance(ink), v) for v in lum)
    print("%.6f %d %.6f %.6f" % (step, ordered, grey, ink_c))


main(sys.argv[1])
