"""2-D outlines of every part, in one place for the solids and the drawings.

fab/solids.py extrudes these outlines and fab/drawings.py writes the same ones to DXF, so a
cut part and its model can never disagree. Plain numpy: no CAD here, and nothing written.

An outline is a closed `Path`: vertices in mm with the bulge of the segment that leaves
each one (0 a straight line, tan(θ/4) an arc of θ, positive counter-clockwise), as in a DXF
LWPOLYLINE. A `Flat` is one flat part: its outline, holes cut through, pockets and
engravings from the top face, and reference lines, each a `Feature` that knows which design
key sizes or places it, so a check that fails can name the key to change.

Frames: rotor discs and templates are drawn as made, magnet side up (see layout.rotor);
stator, mould and plate in machine coordinates seen from above; the winding jig in the
frame of coil 1 moved so the core's centre is the origin.

Kerf: a cutter's path is the part's edge moved out by half the kerf round the outside and in
round holes. Builders take `kerf_mm` and build each outline from its dimensions grown or
shrunk by that half, which is exact for circles, for the convex polygons (mitred, as a
sharp-cornered part needs) and for the lugged stator outline (a union of circles and
strips, each grown). Pockets, engravings and reference lines are never offset.
"""

from fab.outlines.discs import (  # noqa: F401
    DiscLayout,
    Jacking,
    _common_holes,
    _dowel_angles,
    _hub_angles,
    _marks,
    _place_path,
    _places,
    _ring_hole,
    disc_layout,
    disc_title,
    hub_radius_mm,
    jacking,
    magnet_template_flat,
    rotor_disc_flat,
    template_thickness_mm,
)
from fab.outlines.jig import (  # noqa: F401
    JigLayout,
    _jig_holes,
    jig_cheek_flat,
    jig_core_flat,
    jig_layout,
)
from fab.outlines.shapes import (  # noqa: F401
    _GLYPHS,
    ARC_STEP_DEG,
    ENGRAVE_DEPTH_MM,
    INDEX_SIZE_MM,
    JACK_STATOR_CLEARANCE_MM,
    JIG_MARGIN_MM,
    JIG_PIN_DIAMETER_MM,
    JIG_WEB_MM,
    LEAD_SLOT_MIN_MM,
    MARK_CLEARANCE_MM,
    MARK_GAP_MM,
    MARK_HEIGHT_MM,
    PLACE_CLEARANCE_MM,
    STUD_CLEARANCE_MM,
    Feature,
    Flat,
    Path,
    _rect,
    _shoelace,
    arc_centre,
    arc_midpoint,
    circle,
    glyph,
    offset_convex,
    polygon,
)
from fab.outlines.stator import (  # noqa: F401
    LID_VENTS,
    PRINT_FIT_MM,
    StatorLayout,
    _lug_holes,
    coil_place,
    exit_angle_deg,
    former_flats,
    frame_split,
    frame_split_rays,
    lead_channel_radii_mm,
    lead_slots,
    lugged_outline,
    mould_flats,
    mould_lid_flat,
    mould_split,
    mould_split_rays,
    printed_frame_flat,
    stator_flat,
    stator_layout,
    stator_plate_flat,
    template_split_rays,
)
from fab.outlines.stator_map import (  # noqa: F401
    MapJoin,
    MapNode,
    MapPosition,
    StatorMap,
    map_nets,
    stator_map,
)
