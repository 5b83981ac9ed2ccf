"""The default palette: distinct under simulated colour-vision deficiencies; user overrides."""

import itertools

import numpy as np
import pytest

from blocwatch.dashboards.charts.palette import PALETTE, check_colour, group_colours, with_alpha
from blocwatch.dashboards.errors import ReportInputError

# Machado, Oliveira & Fernandes (2009), IEEE TVCG 15(6), severity 1.0, linear RGB
# [from memory: the matrices published with the paper].
CVD = {
    "protanopia": [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
                   [-0.003882, -0.048116, 1.051998]],
    "deuteranopia": [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                     [-0.011820, 0.042940, 0.968881]],
    "tritanopia": [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602],
                   [0.004733, 0.691367, 0.303900]],
    "none": np.eye(3).tolist(),
}


def _linear(hex_colour):
    c = np.array([int(hex_colour[i:i + 2], 16) for i in (1, 3, 5)]) / 255
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)  # sRGB standard


def _lab(rgb):
    xyz = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722],
                    [0.0193, 0.1192, 0.9505]]) @ rgb
    t = xyz / np.array([0.95047, 1.0, 1.08883])  # D65 white
    f = np.where(t > (6 / 29) ** 3, np.cbrt(t), t / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


@pytest.mark.parametrize("kind", sorted(CVD))
def test_palette_colours_stay_apart_under_colour_vision_deficiency(kind):
    lab = [_lab(np.clip(np.array(CVD[kind]) @ _linear(c), 0, 1)) for c in PALETTE]
    closest = min(np.linalg.norm(a - b) for a, b in itertools.combinations(lab, 2))
    assert closest > 12  # CIE76 ΔE; ~2.3 is a just-noticeable difference [from memory]


def test_palette_is_not_plotlys_default():
    plotly_default = ["#636efa", "#EF553B", "#00cc96", "#ab63fa"]  # [S: plotly template dump]
    assert not {c.lower() for c in PALETTE} & {c.lower() for c in plotly_default}


def test_group_colours_sorted_then_overridden():
    colours = group_colours(["Tideward", "Lantern Group", "Tideward"], {"Tideward": "teal"})
    assert colours == {"Lantern Group": PALETTE[0], "Tideward": "teal"}


@pytest.mark.parametrize("bad", ["red;background:url(x)", "#12", "", "rgb(1,2,3)</style>"])
def test_bad_colours_are_refused(bad):
    with pytest.raises(ReportInputError, match="expected a CSS colour"):
        check_colour("Tideward", bad)


def test_with_alpha():
    assert with_alpha("#0072B2", 0.5) == "rgba(0,114,178,0.5)"  # 0x72 = 114, 0xB2 = 178
    assert with_alpha("teal", 0.5) == "teal"


def _cam02_differences():
    """Pairwise colour difference (CAM02-UCS ΔE') of the palette, the worse of normal,
    deuteranomalous and protanomalous (severity 100, Machado et al. 2009) vision, computed by
    the colorspacious package (the reference library)."""
    from colorspacious import cspace_convert, deltaE

    rgb = np.array([[int(c[i:i + 2], 16) / 255 for i in (1, 3, 5)] for c in PALETTE])
    views = [rgb] + [np.clip(cspace_convert(rgb, {"name": "sRGB1+CVD", "cvd_type": kind,
                                                  "severity": 100}, "sRGB1"), 0, 1)
                     for kind in ("deuteranomaly", "protanomaly")]
    n = len(PALETTE)
    d = np.full((n, n), np.inf)
    for v in views:
        for i, j in itertools.combinations(range(n), 2):
            d[i, j] = d[j, i] = min(d[i, j], deltaE(v[i], v[j], input_space="sRGB1"))
    return d


def _prefix_minima(d, order):
    return [min(d[a, b] for a, b in itertools.combinations(order[:k], 2))
            for k in range(2, len(order) + 1)]


def test_first_colours_are_the_most_distinct():
    # Groups take colours in order, so the first k colours must be as far apart as any order
    # starting from the same first colour can make them: the palette's prefix minima are the
    # lexicographically largest over all 5,040 orders (exhaustive search).
    d = _cam02_differences()
    ours = _prefix_minima(d, list(range(len(PALETTE))))
    best = max(_prefix_minima(d, [0, *rest])
               for rest in itertools.permutations(range(1, len(PALETTE))))
    assert ours == best
    # The two oranges (vermilion, orange) are the palette's closest pair but one; they do not
    # meet before the seventh group.
    oranges = [PALETTE.index("#D55E00"), PALETTE.index("#E69F00")]
    assert max(oranges) >= 6
    assert ours[1] > 30  # three groups: clearly apart (ΔE' ≈ 2 is just noticeable, from memory)


def test_every_body_starts_from_the_most_distinct_colours():
    # A report of two bodies: the panel's groups sort before the board's, yet each body's own
    # groups take the first palette colours; a group in both bodies keeps one colour (the
    # panel's Lantern holds blue, so Field and Modelling take the next two).
    colours = group_colours({"Board": ["Tideward", "Lantern", "Upland"],
                             "Panel": ["Field", "Modelling", "Lantern"]}, {"Upland": "teal"})
    assert [colours[g] for g in ("Lantern", "Tideward")] == list(PALETTE[:2])
    assert colours["Upland"] == "teal"  # the override wins
    assert [colours[g] for g in ("Field", "Modelling")] == list(PALETTE[1:3])
    assert colours["Lantern"] == PALETTE[0]
