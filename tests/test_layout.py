"""Conductor placement against hand arithmetic.

Window 10 mm wide, 8 mm high; margins inner 0.5, outer 0.3, top 0.4,
bottom 0.6 mm.  So between the margins x runs 0.5 .. 9.7 mm (9.2 mm) and
y runs 0.6 .. 7.6 mm (7.0 mm).  All the numbers below are in mm.
"""

from __future__ import annotations

import math
import tomllib

import pytest

from racfield.geometry.case import parse_case
from racfield.geometry.case.errors import CaseError
from racfield.geometry.layout import place

MM = 1e-3

HEAD = """\
[sweep]
frequencies = ["100 kHz"]

[window]
width = "10 mm"
height = "8 mm"
boundary = "open"
stacking = "{stacking}"
margins = {{ inner = "0.5 mm", outer = "0.3 mm", top = "0.4 mm", bottom = "0.6 mm" }}
"""

ROUND = '{ shape = "round", diameter = "0.4 mm", outer_diameter = "0.5 mm" }'
RECT = ('{ shape = "rectangular", width = "0.3 mm", height = "0.8 mm", '
        'outer_width = "0.4 mm", outer_height = "1.0 mm" }')
FOIL = '{ shape = "foil", thickness = "0.1 mm", height = "6 mm" }'


def layer(winding: str, conductor: str, turns: int, insulation: str = "0 mm", repeat: int = 1,
          align: str = "centre") -> str:
    return (f'\n[[layer]]\nwinding = "{winding}"\nconductor = {conductor}\nturns = {turns}\n'
            f'insulation_after = "{insulation}"\nrepeat = {repeat}\nalign = "{align}"\n')


def conductor(winding: str, at: tuple[str, str], **shape: str) -> str:
    keys = "".join(f'{k} = "{v}"\n' for k, v in shape.items())
    return f'\n[[conductor]]\nwinding = "{winding}"\nat = ["{at[0]}", "{at[1]}"]\n{keys}'


def placed(*parts: str, stacking: str = "across-width"):
    body = "".join(parts)
    windings = "".join(f'\n[[winding]]\nname = "{name}"\n' for name in ("a", "b")
                       if f'winding = "{name}"' in body)
    doc = tomllib.loads(HEAD.format(stacking=stacking) + windings + body)
    return place(parse_case(doc, "layout.toml"))


def mm(values) -> list[float]:
    return [v / MM for v in values]


def approx(values) -> object:
    return pytest.approx(values, abs=1e-9)


def refused(*parts: str, stacking: str = "across-width") -> CaseError:
    with pytest.raises(CaseError) as info:
        placed(*parts, stacking=stacking)
    assert len(str(info.value).splitlines()) == 1
    return info.value


# --- across-width stacking: layers from the inner margin outward ------------


def test_across_width_layer_positions():
    cs = placed(layer("a", ROUND, 4, "0.2 mm"), layer("b", RECT, 3, "0.1 mm", repeat=2),
                layer("a", FOIL, 1))
    assert len(cs) == 4 + 3 + 3 + 1
    # x: inner margin 0.5, then outer sizes and insulation_after
    #   round (outer 0.5):        centre 0.5 + 0.25 = 0.75;  next start 0.5 + 0.5 + 0.2 = 1.2
    #   rect (outer 0.4), 1st:    centre 1.2 + 0.2 = 1.4;    next start 1.2 + 0.4 + 0.1 = 1.7
    #   rect 2nd:                 centre 1.7 + 0.2 = 1.9;    next start 1.7 + 0.4 + 0.1 = 2.2
    #   foil (thickness 0.1):     centre 2.2 + 0.05 = 2.25
    assert mm(c.x for c in cs) == approx([0.75] * 4 + [1.4] * 3 + [1.9] * 3 + [2.25])
    # y: centred in 0.6 .. 7.6 (7.0 free)
    #   round: 4 x 0.5 = 2.0, start 0.6 + (7.0 - 2.0)/2 = 3.1 -> 3.35, 3.85, 4.35, 4.85
    #   rect:  3 x 1.0 = 3.0, start 0.6 + 2.0 = 2.6         -> 3.1, 4.1, 5.1
    #   foil:  6.0,           start 0.6 + 0.5 = 1.1         -> 4.1
    assert mm(c.y for c in cs) == approx([3.35, 3.85, 4.35, 4.85] + [3.1, 4.1, 5.1] * 2 + [4.1])
    # bare sizes; a foil stands upright (thickness across the window width)
    assert [(c.shape, round(c.width / MM, 9), round(c.height / MM, 9)) for c in (cs[0], cs[4], cs[10])] == [
        ("round", 0.4, 0.4), ("rect", 0.3, 0.8), ("rect", 0.1, 6.0)]


@pytest.mark.parametrize("align,expected", [
    ("centre", [3.35, 3.85, 4.35, 4.85]),
    ("start", [0.85, 1.35, 1.85, 2.35]),            # from the bottom margin 0.6 up, pitch 0.5
    ("end", [5.85, 6.35, 6.85, 7.35]),              # ending at 7.6 - 0.25 = 7.35
    ("spread", [1.475, 3.225, 4.975, 6.725]),       # 7.0 / 4 = 1.75 each: 0.6 + 0.875 + 1.75 k
])
def test_across_width_align(align, expected):
    cs = placed(layer("a", ROUND, 4, align=align))
    assert mm(c.y for c in cs) == approx(expected)
    assert mm(c.x for c in cs) == approx([0.75] * 4)


def test_turns_exactly_filling_the_layer_are_allowed():
    # 14 turns x 0.5 = 7.0 = the free height; bare round 0.4 mm
    cs = placed(layer("a", ROUND, 14))
    assert mm(c.y for c in cs) == approx([0.85 + 0.5 * k for k in range(14)])
    # bare turns that touch (outer = bare diameter) are allowed too
    touching = '{ shape = "round", diameter = "0.5 mm" }'
    assert len(placed(layer("a", touching, 14))) == 14


def test_turns_that_do_not_fit_are_refused():
    err = refused(layer("a", ROUND, 15))      # 15 x 0.5 = 7.5 > 7.0
    assert err.key == "layer[1].turns"
    assert "7.5 mm" in err.problem and "7 mm" in err.problem


def test_layers_that_do_not_fit_across_the_width_are_refused():
    # 9.2 mm free; rect outer 0.4 + insulation 0.1 = 0.5 per layer: 18 layers reach
    # 0.5 * 17 + 0.4 = 8.9, the 19th would end at 9.4 > 9.2
    assert len(placed(layer("a", RECT, 1, "0.1 mm", repeat=18))) == 18
    err = refused(layer("a", RECT, 1, "0.1 mm", repeat=19))
    assert err.key == "layer[1]"
    assert "9.4 mm" in err.problem and "9.2 mm" in err.problem


def test_layers_may_fill_the_width_exactly():
    # 23 rect layers without insulation: 23 x 0.4 = 9.2 = the free width
    cs = placed(layer("a", RECT, 1, repeat=23))
    assert mm(c.x for c in cs) == approx([0.5 + 0.2 + 0.4 * k for k in range(23)])


# --- along-height stacking: layers from the bottom margin upward ------------


def test_along_height_layer_positions():
    cs = placed(layer("a", ROUND, 4, "0.2 mm"), layer("b", FOIL, 1, "0.05 mm", repeat=2),
                layer("a", RECT, 3), stacking="along-height")
    assert len(cs) == 4 + 2 + 3
    # y: bottom margin 0.6, then outer sizes and insulation_after
    #   round (0.5):  centre 0.85;  next 0.6 + 0.5 + 0.2 = 1.3
    #   foil (0.1):   centre 1.35;  next 1.3 + 0.1 + 0.05 = 1.45; centre 1.5; next 1.6
    #   rect (outer height 1.0): centre 2.1
    assert mm(c.y for c in cs) == approx([0.85] * 4 + [1.35, 1.5] + [2.1] * 3)
    # x: turns along the width, centred in 0.5 .. 9.7 (9.2 free)
    #   round: 4 x 0.5 = 2.0, start 0.5 + 3.6 = 4.1  -> 4.35, 4.85, 5.35, 5.85
    #   foil:  6.0 wide,      start 0.5 + 1.6 = 2.1  -> 5.1
    #   rect:  3 x 0.4 = 1.2, start 0.5 + 4.0 = 4.5  -> 4.7, 5.1, 5.5
    assert mm(c.x for c in cs) == approx([4.35, 4.85, 5.35, 5.85] + [5.1, 5.1] + [4.7, 5.1, 5.5])
    # a foil lies flat: 6 mm along x, 0.1 mm thick along y; rectangles keep their orientation
    assert (round(cs[4].width / MM, 9), round(cs[4].height / MM, 9)) == (6.0, 0.1)
    assert (round(cs[6].width / MM, 9), round(cs[6].height / MM, 9)) == (0.3, 0.8)


@pytest.mark.parametrize("align,expected", [
    ("start", [0.75, 1.25, 1.75]),
    ("end", [8.45, 8.95, 9.45]),                  # ending at 9.7 - 0.25
    ("spread", [0.5 + 9.2 / 6 * (2 * k + 1) for k in range(3)]),
])
def test_along_height_align(align, expected):
    cs = placed(layer("a", ROUND, 3, align=align), stacking="along-height")
    assert mm(c.x for c in cs) == approx(expected)
    assert mm(c.y for c in cs) == approx([0.85] * 3)


def test_along_height_turns_that_do_not_fit_are_refused():
    # a flat 6 mm foil: two turns need 12 mm of the 9.2 mm free width
    err = refused(layer("a", FOIL, 2), stacking="along-height")
    assert err.key == "layer[1].turns"


def test_along_height_layers_that_do_not_fit_are_refused():
    # 7.0 mm free height; rect layers 1.0 mm each: 7 fit, 8 do not
    assert len(placed(layer("a", RECT, 1, repeat=7), stacking="along-height")) == 7
    err = refused(layer("a", RECT, 1, repeat=8), stacking="along-height")
    assert err.key == "layer[1]" and "height" in err.problem


# --- repeat, turn numbering -------------------------------------------------


@pytest.mark.parametrize("repeat", [1, 2, 5])
def test_repeat_gives_that_many_layers(repeat):
    cs = placed(layer("a", RECT, 3, "0.1 mm", repeat=repeat))
    assert len(cs) == 3 * repeat
    assert mm(sorted({round(c.x, 12) for c in cs})) == approx([0.7 + 0.5 * k for k in range(repeat)])
    assert all(c.key == "layer[1]" for c in cs)


def test_turns_numbered_per_winding_in_order_of_appearance():
    cs = placed(layer("a", ROUND, 2), layer("b", RECT, 3), layer("a", ROUND, 2, repeat=2),
                conductor("b", ("9 mm", "7 mm"), shape="round", diameter="0.4 mm"),
                conductor("a", ("9 mm", "1 mm"), shape="round", diameter="0.4 mm"))
    assert [c.index for c in cs] == list(range(len(cs)))
    assert [(c.winding, c.turn) for c in cs] == (
        [("a", 1), ("a", 2)] + [("b", 1), ("b", 2), ("b", 3)]
        + [("a", 3), ("a", 4), ("a", 5), ("a", 6)] + [("b", 4), ("a", 7)])
    assert [c.key for c in cs] == (["layer[1]"] * 2 + ["layer[2]"] * 3 + ["layer[3]"] * 4
                                   + ["conductor[1]", "conductor[2]"])


# --- explicit conductors ----------------------------------------------------


def test_explicit_conductors_keep_their_coordinates():
    cs = placed(conductor("a", ("1.25 mm", "2.5 mm"), shape="round", diameter="1 mm"),
                conductor("b", ("4 mm", "3 mm"), shape="rectangular", width="2 mm", height="0.5 mm"),
                conductor("a", ("6 mm", "4 mm"), shape="foil", thickness="0.1 mm", height="5 mm"),
                stacking="along-height")   # explicit conductors are not rotated by the stacking
    assert [(round(c.x / MM, 9), round(c.y / MM, 9)) for c in cs] == [(1.25, 2.5), (4.0, 3.0), (6.0, 4.0)]
    assert [(c.shape, round(c.width / MM, 9), round(c.height / MM, 9)) for c in cs] == [
        ("round", 1.0, 1.0), ("rect", 2.0, 0.5), ("rect", 0.1, 5.0)]


def test_explicit_conductors_may_sit_in_the_margins_and_touch_the_walls():
    cs = placed(conductor("a", ("0.2 mm", "0.2 mm"), shape="round", diameter="0.4 mm"),
                conductor("a", ("9.75 mm", "7.75 mm"), shape="rectangular", width="0.5 mm", height="0.5 mm"))
    assert len(cs) == 2


@pytest.mark.parametrize("at,shape", [
    (("0.19 mm", "1 mm"), {"shape": "round", "diameter": "0.4 mm"}),
    (("5 mm", "7.9 mm"), {"shape": "round", "diameter": "0.4 mm"}),
    (("9.9 mm", "4 mm"), {"shape": "rectangular", "width": "0.3 mm", "height": "0.3 mm"}),
    (("5 mm", "-1 mm"), {"shape": "rectangular", "width": "0.3 mm", "height": "0.3 mm"}),
])
def test_explicit_conductor_outside_the_window_is_refused(at, shape):
    err = refused(conductor("a", at, **shape))
    assert err.key == "conductor[1]" and "outside" in err.problem


# --- touching is allowed, overlapping is refused ----------------------------

R1 = {"shape": "round", "diameter": "1 mm"}
SQ1 = {"shape": "rectangular", "width": "1 mm", "height": "1 mm"}


@pytest.mark.parametrize("second_at,second", [
    (("3 mm", "2 mm"), R1),           # round on round, centres 1 mm apart
    (("2 mm", "3 mm"), R1),
    (("2.6 mm", "2.8 mm"), R1),       # 0.6, 0.8: distance 1.0
    (("3 mm", "2 mm"), SQ1),          # square beside a round: a side at the circle's edge
    (("2 mm", "1 mm"), SQ1),          # below it
])
def test_touching_round_conductor_is_allowed(second_at, second):
    cs = placed(conductor("a", ("2 mm", "2 mm"), **R1), conductor("a", second_at, **second))
    assert len(cs) == 2


@pytest.mark.parametrize("second_at,second", [
    (("2.99 mm", "2 mm"), R1),
    (("2.5 mm", "2.8 mm"), R1),       # distance 0.943
    (("2.99 mm", "2 mm"), SQ1),
    (("2.5 mm", "2.5 mm"), SQ1),      # square corner (2, 2) at the round's centre
])
def test_overlapping_round_conductor_is_refused(second_at, second):
    err = refused(conductor("a", ("2 mm", "2 mm"), **R1), conductor("b", second_at, **second))
    assert err.key == "conductor[2]"
    assert "overlaps" in err.problem and "conductor[1]" in err.problem


def test_round_beside_a_rectangle_corner_is_exact():
    # square [1.5, 2.5] x [1.5, 2.5]; a 1 mm round at (2.85, 2.85) is 0.35 * sqrt(2) = 0.495 mm
    # from the corner (2.5, 2.5): overlaps although the boxes overlap by only 0.15 mm; at
    # (2.9, 2.9) it is 0.566 mm away: clear, although the boxes still overlap by 0.1 mm
    refused(conductor("a", ("2 mm", "2 mm"), **SQ1), conductor("a", ("2.85 mm", "2.85 mm"), **R1))
    assert len(placed(conductor("a", ("2 mm", "2 mm"), **SQ1),
                      conductor("a", ("2.9 mm", "2.9 mm"), **R1))) == 2


def test_touching_rectangles_are_allowed_overlapping_refused():
    for at in (("3 mm", "2 mm"), ("2 mm", "3 mm"), ("3 mm", "3 mm"), ("1 mm", "1.5 mm")):
        assert len(placed(conductor("a", ("2 mm", "2 mm"), **SQ1), conductor("a", at, **SQ1))) == 2
    for at in (("2.99 mm", "2 mm"), ("2 mm", "2.99 mm"), ("2.9 mm", "2.9 mm"), ("2 mm", "2 mm")):
        err = refused(conductor("a", ("2 mm", "2 mm"), **SQ1), conductor("a", at, **SQ1))
        assert err.key == "conductor[2]"


def test_explicit_conductor_overlapping_a_layer_turn_is_refused():
    # layer turns at x = 0.75, y = 3.35 .. 4.85 (bare 0.4 mm); a 0.4 mm round at (0.75, 3.6)
    # is 0.25 mm from two of them
    err = refused(layer("a", ROUND, 4), conductor("b", ("0.75 mm", "3.6 mm"), shape="round",
                                                  diameter="0.4 mm"))
    assert err.key == "conductor[1]" and "layer[1]" in err.problem
    # the bare turns leave a 0.1 mm gap (3.55 .. 3.65): a 0.1 mm round fills it, touching both
    assert len(placed(layer("a", ROUND, 4), conductor("b", ("0.75 mm", "3.6 mm"), shape="round",
                                                      diameter="0.1 mm"))) == 5


# --- many conductors, and the first overlap in case order ---------------------


def test_first_overlap_in_case_order_is_named():
    # conductor[3] overlaps conductor[1] and conductor[2]; conductor[2] overlaps nothing before it:
    # the message names conductor[3] and the earliest one it overlaps (the rule is the spec)
    err = refused(conductor("a", ("2 mm", "2 mm"), **R1), conductor("a", ("3 mm", "2 mm"), **R1),
                  conductor("b", ("2.5 mm", "2 mm"), **R1))
    assert err.key == "conductor[3]" and "(conductor[1])" in err.problem


def test_overlap_found_among_many_conductors():
    # 700 turns of 0.01 mm in one column (the grid check is linear in the conductors); one
    # explicit conductor at the middle of the column overlaps a turn
    column = layer("a", '{ shape = "round", diameter = "0.01 mm" }', 700, align="start")
    assert len(placed(column)) == 700
    err = refused(column, conductor("b", ("0.505 mm", "4.1 mm"), shape="round", diameter="0.01 mm"))
    assert err.key == "conductor[1]" and "layer[1]" in err.problem


def test_more_than_the_conductor_limit_is_refused():
    # MAX_CONDUCTORS (10000): counted before anything is placed, named at the layer that passes it
    from racfield.geometry.layout import MAX_CONDUCTORS
    litz = '{ shape = "litz", strands = 5000, strand_diameter = "1 um", representation = "strands" }'
    err = refused(layer("a", litz, 1), layer("a", litz, 1), layer("b", litz, 1))
    assert MAX_CONDUCTORS == 10_000 and err.key == "layer[3]" and "10000 conductors" in err.problem


def test_ring_far_from_the_axis_has_the_straight_wire_resistance():
    # R = rho / (R0 - sqrt(R0^2 - a^2)) tends to rho 2 pi R0 / (pi a^2) for a << R0 (the
    # straight wire of length 2 pi R0; exact limit of the series a^2/(2 R0) + ...), and a
    # rectangle's 2 pi rho / (h ln(r2/r1)) tends to rho 2 pi r / (w h): computed without
    # cancellation even at a 1e9 ratio
    from racfield.geometry.layout import Conductor, dc_resistance
    rho, r0 = 1.7241e-8, 1.0
    wire = Conductor(0, "a", 1, "round", 0.0, 0.0, 2e-9, 2e-9, "layer[1]")
    assert dc_resistance(wire, rho, r0) == pytest.approx(rho * 2 * math.pi * r0 / (math.pi * 1e-18), rel=1e-12)
    foil = Conductor(0, "a", 1, "rect", 0.0, 0.0, 1e-9, 1e-3, "layer[1]")
    assert dc_resistance(foil, rho, r0) == pytest.approx(rho * 2 * math.pi * r0 / (1e-9 * 1e-3), rel=1e-12)
