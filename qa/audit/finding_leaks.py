"""One finding as an engine leak: the record's finding kinds mapped onto :mod:`acoustics` models.

:func:`finding_leak` turns a finding (SI sizes, fill, face, count) into an :class:`acoustics.Leak` on
its wall type; :class:`WallContext` holds what every finding of one wall shares and memoises alike
computations. :func:`qa.audit.summary.wall_inputs` uses these to build a wall's leaks; the mapping of kinds
is listed in its Notes.

References
----------
.. [1] Sealwalk acoustics method notes, Sections 5-7 (leak and defect models).
"""

from __future__ import annotations

import math

import numpy as np

from .curves import N_BANDS, tl_array

#: One layer of 15.9 mm (5/8 in) gypsum board: default depth of a one-face gap when the wall type
#: has no layers (common practice, no source).
DEFAULT_BOARD_M = 0.0159
#: Airflow resistivity of loose mineral-wool packing, Pa s/m^2 (common practice, no source;
#: acoustics.filled_gap docstring gives 5 000-20 000).
FIBRE_FLOW_RESISTIVITY = 10000.0
#: Surface density of a thin film closing a gap (about 1 mm of sealant), kg/m^2 (acoustics.skin_gap).
SKIN_SURFACE_DENSITY = 1.5


class Unmodelled(ValueError):
    """A finding the engine cannot turn into a leak on this wall (the message says why)."""


def _assembly(wall_type):
    """The wall type's layered construction as a reference panel, or None for a lab-only type.

    Defect models run on the wall type's own spec (its area, default the 10 m^2 of a laboratory
    opening), not on each wall's size: a defect's added transmission area scales with the defect, and
    sharing one panel per wall type lets alike findings on different walls share one computation.
    The finite-size correction of each wall's actual size is therefore not modelled (it moves the
    added area by a few dB only below about 125 Hz).
    """
    import acoustics

    if not wall_type.layers:
        return None
    try:
        return acoustics.Assembly.from_dict(wall_type.layers)
    except acoustics.AcousticsError:
        return None


class WallContext:
    """What every finding of one wall needs: sizes, the layered construction, the lab curve."""

    def __init__(self, wall, memo: dict | None = None):
        wt = wall.wall_type
        self.wall, self.wall_type = wall, wt
        self.area = float(wall.length_m) * float(wall.height_m)
        self.memo = memo if memo is not None else {}
        if ("asm", wt.pk) not in self.memo:
            self.memo[("asm", wt.pk)] = _assembly(wt)
        self.asm = self.memo[("asm", wt.pk)]
        self.key = wt.pk
        one_leaf = self.asm is not None and len(self.asm.leaves) == 1
        self.single_leaf = one_leaf or wt.construction == "masonry"
        self.tl = tl_array(wt.tl)

    def per_m2(self, name: str, make):
        """A defect's added area per m^2 of affected wall (the models are linear in that area)."""
        key = (name, self.key)
        if key not in self.memo:
            self.memo[key] = make()
        return self.memo[key]

    def board(self, face: int) -> float:
        if self.asm is not None and face < len(self.asm.leaves):
            return self.asm.leaves[face].thickness
        return DEFAULT_BOARD_M

    def lab_tl(self) -> tuple[np.ndarray, bool]:
        """The lab curve with missing bands filled from the nearest measured band."""
        tl = self.tl
        ok = np.isfinite(tl)
        if ok.all() or not ok.any():
            return tl, False
        idx = np.arange(N_BANDS)
        return np.interp(idx, idx[ok], tl[ok]), True


def _gap_leak(f, depth: float, memo: dict):
    """A slit, hole, ring or open area as a through-path of ``depth`` m (one of them, count 1).

    ``memo`` (one request's scratch dict) shares the result between findings of the same geometry:
    template defaults make many findings alike, and a hole costs milliseconds to band-average.
    """
    import acoustics

    kind, fill = f.kind, f.fill
    key = (kind, fill, f.width_m, f.length_m, f.diameter_m, f.area_m2, bool(f.at_edge), round(depth, 6))
    if key in memo:
        return key, memo[key]
    extra: tuple[str, ...] = ()
    if kind == "slit":
        shape, width, length = "slit", f.width_m, f.length_m
    elif kind == "ring":
        shape, width, length = "slit", f.width_m, math.pi * (f.diameter_m + f.width_m)
    elif kind == "hole":
        shape, width, length = "hole", f.diameter_m, 1.0
    else:  # open area
        area = f.area_m2 if f.area_m2 else (f.width_m or 0) * (f.length_m or 0)
        if fill == "none":
            memo[key] = acoustics.open_area(area)
            return key, memo[key]
        shape, width, length, extra = "hole", math.sqrt(4 * area / math.pi), 1.0, ("equivalent_hole",)
    if fill == "fibre":
        leak = acoustics.filled_gap(
            width, length, depth, flow_resistivity=FIBRE_FLOW_RESISTIVITY, shape=shape
        )
    elif fill == "skin":
        leak = acoustics.skin_gap(width, length, depth, surface_density=SKIN_SURFACE_DENSITY, shape=shape)
    elif kind == "slit":
        leak = acoustics.slit(width, length, depth, edge=bool(f.at_edge))
    elif kind == "ring":
        leak = acoustics.ring_gap(f.diameter_m, f.width_m, depth)
    else:
        leak = acoustics.hole(width, depth)
    if extra:
        leak = acoustics.Leak(leak.area, leak.kind, "", (*leak.flags, *extra), leak.open_area)
    memo[key] = leak
    return key, leak


def _relabel(leak, kind: str, label: str, count: int = 1):
    import acoustics

    out = acoustics.Leak(leak.area, kind, label, leak.flags, leak.open_area)
    return out.times(count) if count > 1 else out


def finding_leak(f, ctx: WallContext):
    """One finding as an :class:`acoustics.Leak` (added transmission area per band, m^2).

    Raises :class:`Unmodelled` when the wall type cannot carry the model (e.g. a missing batt on a
    wall type known only by its lab curve).
    """
    import acoustics

    label = f"{f.get_kind_display()} #{f.pk}"
    count = int(f.count or 1)
    face = {"a": 0, "b": 1}.get(f.face)
    memo = ctx.memo
    try:
        if f.kind in ("slit", "hole", "ring", "open_area"):
            if face is None or ctx.single_leaf:
                depth = f.depth_m or ctx.wall_type.thickness_m
                _key, leak = _gap_leak(f, depth, memo)
                flags = ("single_leaf_through",) if face is not None else ()
                leak = acoustics.Leak(leak.area, leak.kind, label, (*leak.flags, *flags), leak.open_area)
                return _relabel(leak, f.kind, label, count)
            gkey, gap = _gap_leak(f, f.depth_m or ctx.board(face), memo)
            mkey = ("one_face", ctx.key, face, gkey)
            if mkey not in memo:
                if ctx.asm is not None:
                    memo[mkey] = acoustics.one_face_gap(ctx.asm, face, gap)
                else:
                    tl, filled = ctx.lab_tl()
                    if not np.isfinite(tl).all():
                        raise Unmodelled("the wall type has no TL curve")
                    lk = acoustics.one_face_gap_from_lab(tl, gap)
                    if filled:
                        lk = acoustics.Leak(lk.area, lk.kind, "", (*lk.flags, "tl_gaps_filled"))
                    memo[mkey] = lk
            leak = memo[mkey]
            return acoustics.Leak(
                leak.area * count,
                f.kind,
                label,
                leak.flags,
                gap.open_area * count if math.isfinite(gap.open_area) else float("nan"),
            )
        if ctx.asm is None:
            raise Unmodelled("needs the wall type's layers; it is known only by its lab curve")
        if f.kind == "bridge":
            if f.length_m:
                leak = acoustics.rigid_bridge(ctx.asm, length=f.length_m)
            else:
                leak = acoustics.rigid_bridge(ctx.asm, points=count)
            return _relabel(leak, "bridge", label)
        asm = ctx.asm
        if f.kind in ("missing_insulation", "channel_short", "missing_layer"):
            side = 1 if f.face == "b" else 0
            unit = ctx.per_m2(
                f"{f.kind}:{side}",
                {
                    "missing_insulation": lambda: acoustics.insulation_defect(asm, 1.0),
                    "channel_short": lambda: acoustics.Leak.added(
                        acoustics.channel_short_circuit(asm, 1.0).area / asm.area,
                        kind="channel_short_circuit",
                    ),
                    "missing_layer": lambda: acoustics.missing_layer(asm, side, 1.0),
                }[f.kind],
            )
            area = min(float(f.area_m2), ctx.area)
            return acoustics.Leak(unit.area * area, f.kind, label, unit.flags)
        if f.kind == "back_to_back":
            # The lost cavity over the boxes' footprint, plus the recorded box leak through both boxes.
            one = ctx.per_m2("back_to_back", lambda: acoustics.back_to_back_boxes(asm))
            boxes = acoustics.Leak(one.area * count, one.kind, "", one.flags)
            depth = f.depth_m or ctx.wall_type.thickness_m
            parts = [boxes.area]
            flags = list(boxes.flags)
            if f.area_m2:
                hkey = ("b2b-hole", f.area_m2, round(depth, 6))
                if hkey not in memo:
                    memo[hkey] = acoustics.hole(math.sqrt(4 * f.area_m2 / math.pi), depth)
                hole = memo[hkey].times(count)
                parts.append(hole.area)
                flags += [*hole.flags, "equivalent_hole"]
            return acoustics.Leak.added(
                np.sum(parts, axis=0), kind=f.kind, label=label, flags=tuple(dict.fromkeys(flags))
            )
    except acoustics.AcousticsError as exc:  # GeometryError and friends are ValueErrors with a reason
        raise Unmodelled(str(exc)) from None
    raise Unmodelled(f"kind {f.kind!r} has no model")
