"""Printed parts larger than the bed, split into segments that fit (fab.segments)."""

from __future__ import annotations

import math
import shutil
import subprocess

import pytest
from demos import design

from fab import solids
from fab.catalogue import write_stl
from fab.outlines import template_split_rays
from fab.segments import JOINT_HOLE_MM, segment_plan, split


def test_a_part_that_fits_is_whole_and_one_too_far_from_its_centre_cannot_be_split():
    assert segment_plan(100.0, 90.0, 250.0).count == 1
    assert segment_plan(260.0, 250.0, 250.0) is None  # a sector from the centre is R long


@pytest.mark.parametrize("radius", [130.0, 175.0, 240.0])
def test_every_planned_sector_fits_the_bed(radius):
    # closed form: a sector of angle φ with its half laps, bisector along x, is R along and
    # 2 R sin(φ/2 + lap) across (φ/2 + lap under 90°)
    bed = 250.0
    plan = segment_plan(radius, radius - 5.0, bed)
    rays = sorted(plan.rays_deg)
    for a, b in zip(rays, rays[1:] + [rays[0] + 360.0], strict=True):
        half = math.radians((b - a) / 2 + plan.lap_deg + 2.0)  # and what modelling may move a ray
        assert half < math.pi / 2 and 2 * radius * math.sin(half) <= bed + 1e-9


@pytest.fixture(scope="module")
def template_split():
    d = design("millrace")
    r = d.forces.disc_outer_radius_mm
    plan = segment_plan(
        r, d.spec.magnets.pitch_radius_mm, d.spec.fab.print_bed_mm, lambda _lap: template_split_rays(d, 1)
    )
    whole = solids.magnet_template(d, 1)
    return d, plan, whole, split(whole, plan)


def test_segments_hold_the_whole_part_less_their_joint_holes(template_split):
    # conservation: the segments together are the part, less one hole's volume per joint
    d, plan, whole, segs = template_split
    assert plan.count == len(segs) > 1
    height = whole.BoundingBox().zlen
    holes = plan.count * math.pi * (JOINT_HOLE_MM / 2) ** 2 * height
    assert sum(s.Volume() for s in segs) == pytest.approx(whole.Volume() - holes, rel=1e-6)
    for s in segs:
        assert s.isValid() and len(s.Solids()) == 1
        box = s.BoundingBox()
        assert max(box.xlen, box.ylen) <= d.spec.fab.print_bed_mm


@pytest.fixture(scope="module")
def frame_split():
    from fab.outlines import frame_split

    d = design("hilltop")  # petg: a printed frame
    r, joint, rays = frame_split(d)
    plan = segment_plan(r, joint, d.spec.fab.print_bed_mm, rays)
    return d, plan, None, split(solids.stator_frame(d), plan)


@pytest.mark.skipif(shutil.which("slic3r") is None, reason="no slic3r on this machine")
@pytest.mark.parametrize("which", ["template_split", "frame_split"])
def test_a_slicer_slices_every_segment(which, request, tmp_path):
    d, _, _, segs = request.getfixturevalue(which)
    bed = d.spec.fab.print_bed_mm
    for k, s in enumerate(segs, start=1):
        path = tmp_path / f"seg{k}.stl"
        write_stl(s, path, d.spec.fab.stl_tolerance_mm)
        shape = f"0x0,{bed:g}x0,{bed:g}x{bed:g},0x{bed:g}"
        gcode = tmp_path / f"seg{k}.gcode"
        out = subprocess.run(
            ["slic3r", "--bed-shape", shape, "-o", str(gcode), str(path)],
            capture_output=True,
            text=True,
            timeout=600,
        )
        assert out.returncode == 0, out.stderr
        assert gcode.stat().st_size > 0
