#!/usr/bin/env python3
"""Writes the demo models of examples/ as TracePathRequest messages in the Protobuf JSON mapping.

The scenarios are invented for the demos: dimensions, sections and loads are plausible for steel, in kN and m,
but they describe no real structure. Run: python3 examples/generate.py
"""
import json
import math
import os

E_STEEL = 2.1e8  # kN/m2
HERE = os.path.dirname(os.path.abspath(__file__))


def pin(node, dirs="XYZ"):
    return [{"node": node, "direction": f"DIRECTION_{d}"} for d in dirs]


def write(name, request):
    with open(os.path.join(HERE, name), "w") as f:
        json.dump(request, f, indent=1)
        f.write("\n")


def market_hall_dome():
    """A shallow single-layer lattice dome over an invented market hall: 28 m across, 1.75 m rise, 3 rings of 10
    nodes on a paraboloid, alternate rings turned by half a bay, outer ring pinned. A lantern of 25 kN hangs from
    the crown."""
    radius, rise, rings, per = 14.0, 1.75, 3, 10
    nodes, bars, supports, loads = [{"id": "crown", "x": 0, "y": 0, "z": rise}], [], [], []
    area = 3.2e-3  # m2, a 168.3 x 6.3 circular hollow section

    def nid(k, j):
        return f"R{k}-{j % per:02d}"

    for k in range(1, rings + 1):
        r = radius * k / rings
        z = rise * (1 - (r / radius) ** 2)
        turn = (k % 2) * math.pi / per
        for j in range(per):
            a = 2 * math.pi * j / per + turn
            nodes.append({"id": nid(k, j), "x": round(r * math.cos(a), 6), "y": round(r * math.sin(a), 6), "z": round(z, 6)})
            if k == rings:
                supports += pin(nid(k, j))
    loads.append({"node": "crown", "fz": -25.0})
    n = 0

    def bar(a, b):
        nonlocal n
        n += 1
        bars.append({"id": f"M{n:03d}", "startNode": a, "endNode": b, "elasticModulus": E_STEEL, "area": area})

    for j in range(per):
        bar("crown", nid(1, j))
    for k in range(1, rings):
        shift = 0 if k % 2 == 1 else -1
        for j in range(per):
            bar(nid(k, j), nid(k, j + 1))
            bar(nid(k, j), nid(k + 1, (j + shift) % per))
            bar(nid(k, j), nid(k + 1, (j + shift + 1) % per))
    return {
        "model": {"name": "market-hall dome", "units": {"force": "kN", "length": "m"},
                  "nodes": nodes, "bars": bars, "supports": supports},
        "loadCase": {"reference": loads},
        "controls": {"method": "CONTINUATION_METHOD_ARC_LENGTH", "initialLoadIncrement": 0.25, "maxPoints": 120,
                     "targetLoadFactor": 5.0,
                     "monitored": [{"node": "crown", "direction": "DIRECTION_Z"}, {"node": "R1-00", "direction": "DIRECTION_Z"}],
                     "fullStateEvery": 10},
    }


def roof_truss_on_spring_bearings():
    """A shallow trussed roof of an invented sports hall: 24 m span, 0.8 m rise of the bottom chord, 0.3 m deep, 8 panels, on
    elastomeric bearings modelled as horizontal springs at both ends (one end also vertically pinned, the other on a
    vertical spring). Plane structure: out-of-plane motion restrained. Purlin loads at the top-chord nodes."""
    span, panels, depth, rise = 24.0, 8, 0.3, 0.8
    nodes, bars, supports, springs, loads = [], [], [], [], []
    for i in range(panels + 1):
        x = span * i / panels
        arch = rise * (1 - (2 * x / span - 1) ** 2)
        nodes.append({"id": f"B{i}", "x": x, "y": round(arch, 6), "z": 0})
        nodes.append({"id": f"T{i}", "x": x, "y": round(arch + depth, 6), "z": 0})
        supports += [{"node": f"B{i}", "direction": "DIRECTION_Z"}, {"node": f"T{i}", "direction": "DIRECTION_Z"}]
        if 0 < i < panels:
            loads.append({"node": f"T{i}", "fy": -10.0})
    n = 0

    def bar(a, b, area):
        nonlocal n
        n += 1
        bars.append({"id": f"E{n:02d}", "startNode": a, "endNode": b, "elasticModulus": E_STEEL, "area": area})

    for i in range(panels):
        bar(f"B{i}", f"B{i+1}", 2.8e-3)
        bar(f"T{i}", f"T{i+1}", 2.8e-3)
        bar(f"B{i}", f"T{i+1}" if i % 2 == 0 else f"T{i}", 1.2e-3)
        if i % 2 == 1:
            bar(f"B{i+1}", f"T{i}", 1.2e-3)
    for i in range(panels + 1):
        bar(f"B{i}", f"T{i}", 1.2e-3)
    supports += [{"node": "B0", "direction": "DIRECTION_Y"}]
    springs += [
        {"id": "bearing-west-h", "node": "B0", "direction": "DIRECTION_X", "stiffness": 1.0e5},
        {"id": "bearing-east-h", "node": f"B{panels}", "direction": "DIRECTION_X", "stiffness": 1.0e5},
        {"id": "bearing-east-v", "node": f"B{panels}", "direction": "DIRECTION_Y", "stiffness": 2.0e5},
    ]
    return {
        "model": {"name": "roof truss on spring bearings", "units": {"force": "kN", "length": "m"},
                  "nodes": nodes, "bars": bars, "groundSprings": springs, "supports": supports},
        "loadCase": {"reference": loads},
        "controls": {"method": "CONTINUATION_METHOD_ARC_LENGTH", "initialLoadIncrement": 0.5, "maxPoints": 60,
                     "monitored": [{"node": f"T{panels // 2}", "direction": "DIRECTION_Y"},
                                   {"node": f"B{panels}", "direction": "DIRECTION_X"}]},
    }


def guyed_mast():
    """A slender triangular lattice mast of an invented radio relay site: 36 m high, 0.9 m leg spacing, 12 bays,
    guyed at 12 m, 24 m and 36 m to three anchors 18 m out, guys pretensioned. Antenna weight on top, scaled by λ."""
    height, bays, side = 36.0, 12, 0.9
    r = side / math.sqrt(3)
    nodes, bars, supports, loads = [], [], [], []
    legs = ["a", "b", "c"]
    for k in range(bays + 1):
        z = height * k / bays
        for i, leg in enumerate(legs):
            ang = 2 * math.pi * i / 3 + math.pi / 2
            nodes.append({"id": f"{leg}{k}", "x": round(r * math.cos(ang), 6), "y": round(r * math.sin(ang), 6), "z": z})
    for leg in legs:
        supports += pin(f"{leg}0")
    n = 0

    def bar(a, b, area, prestress=0.0):
        nonlocal n
        n += 1
        item = {"id": f"S{n:03d}", "startNode": a, "endNode": b, "elasticModulus": E_STEEL, "area": area}
        if prestress:
            item["initialStress"] = prestress
        bars.append(item)

    for k in range(bays):
        for i, leg in enumerate(legs):
            nxt = legs[(i + 1) % 3]
            bar(f"{leg}{k}", f"{leg}{k+1}", 1.4e-3)          # legs
            bar(f"{leg}{k+1}", f"{nxt}{k+1}", 3.0e-4)        # horizontals
            bar(f"{leg}{k}", f"{nxt}{k+1}", 3.0e-4)          # diagonals, crossed in every face so the
            bar(f"{nxt}{k}", f"{leg}{k+1}", 3.0e-4)          # mast has no twist-sway coupling
    for i, leg in enumerate(legs):
        nxt = legs[(i + 1) % 3]
        bar(f"{leg}0", f"{nxt}0", 3.0e-4)
    for level in (4, 8, 12):
        for i, leg in enumerate(legs):
            ang = 2 * math.pi * i / 3 + math.pi / 2
            anchor = f"anchor-{leg}{level}"
            nodes.append({"id": anchor, "x": round(18 * math.cos(ang), 6), "y": round(18 * math.sin(ang), 6), "z": 0})
            supports += pin(anchor)
            bar(anchor, f"{leg}{level}", 1.5e-4, prestress=1.0e5)  # guys, 100 MPa pretension
    for leg in legs:
        loads.append({"node": f"{leg}{bays}", "fz": -20.0})
    return {
        "model": {"name": "guyed relay mast", "units": {"force": "kN", "length": "m"},
                  "nodes": nodes, "bars": bars, "supports": supports},
        "loadCase": {"reference": loads},
        "controls": {"method": "CONTINUATION_METHOD_ARC_LENGTH", "initialLoadIncrement": 1.0, "maxPoints": 60,
                     "monitored": [{"node": f"a{bays}", "direction": "DIRECTION_Z"}, {"node": "a6", "direction": "DIRECTION_X"}],
                     "stopAtFirstCriticalPoint": False},
    }


def tube(diameter, thickness):
    """Section of a circular hollow steel tube (outer diameter, wall thickness in m): A, I (about any axis), J = 2I."""
    outer, inner = diameter / 2, diameter / 2 - thickness
    area = math.pi * (outer ** 2 - inner ** 2)
    second = math.pi * (outer ** 4 - inner ** 4) / 4
    return area, second, 2 * second


def lattice_shell_pavilion(rings=3, radius=12.0, rise=1.0, load=10.0, subdivisions=2):
    """A rigid-jointed single-layer lattice shell over an invented garden pavilion: a triangulated cap, 24 m across and
    1 m high, made of 114.3 x 5 steel tubes welded at the joints. The plan is a triangular grid of hexagonal rings
    drawn out to circles (ring k of 6k nodes at radius 12 k/3 m) on a paraboloid; the outer ring is pinned (rotations
    free) and carries no members of its own. A suspended installation hangs from the crown and the six joints of the
    first ring, 10 kN at each, as the reference load. Each member is divided into two elements so that it can bend
    between the joints."""
    area, second, torsion = tube(0.1143, 0.005)
    shear = E_STEEL / 2.6  # common practice for steel, no source: G = E / (2 (1 + 0.3))
    pos, ids = {}, {}

    def ring_of(q, r):
        return max(abs(q), abs(r), abs(q + r))

    for q in range(-rings, rings + 1):
        for r in range(-rings, rings + 1):
            k = ring_of(q, r)
            if k > rings:
                continue
            x, y = q + r / 2, r * math.sqrt(3) / 2
            if k == 0:
                ids[(q, r)], pos[(q, r)] = "crown", (0.0, 0.0)
                continue
            # Place ring k on a circle of radius radius k / rings, keeping the node's angle.
            a = math.atan2(y, x)
            rr = radius * k / rings
            pos[(q, r)] = (rr * math.cos(a), rr * math.sin(a))
            j = round((a % (2 * math.pi)) / (2 * math.pi / (6 * k))) % (6 * k)
            ids[(q, r)] = f"J{k}-{j:02d}"
    nodes, supports, loads, beams = [], [], [], []
    for key in sorted(pos, key=lambda c: (ring_of(*c), ids[c])):
        x, y = pos[key]
        z = rise * (1 - (x * x + y * y) / radius ** 2)
        nodes.append({"id": ids[key], "x": round(x, 6), "y": round(y, 6), "z": round(z, 6)})
        if ring_of(*key) == rings:
            supports += pin(ids[key])
        elif ring_of(*key) <= 1:
            loads.append({"node": ids[key], "fz": -load})
    n = 0
    for key in sorted(pos, key=lambda c: (ring_of(*c), ids[c])):
        q, r = key
        for dq, dr in ((1, 0), (0, 1), (-1, 1)):
            other = (q + dq, r + dr)
            if other not in pos or (ring_of(*key) == rings and ring_of(*other) == rings):
                continue
            n += 1
            beams.append({"id": f"T{n:03d}", "startNode": ids[key], "endNode": ids[other],
                          "elasticModulus": E_STEEL, "shearModulus": round(shear), "area": round(area, 9),
                          "secondMomentY": round(second, 12), "secondMomentZ": round(second, 12), "torsionConstant": round(torsion, 12),
                          "orientation": {"x": 0, "y": 0, "z": 1}, "subdivisions": subdivisions})
    return {
        "model": {"name": "pavilion lattice shell", "units": {"force": "kN", "length": "m"},
                  "nodes": nodes, "beams": beams, "supports": supports},
        "loadCase": {"reference": loads},
        "controls": {"method": "CONTINUATION_METHOD_ARC_LENGTH", "initialLoadIncrement": 0.25, "maxPoints": 60,
                     "targetLoadFactor": 3.0,
                     "monitored": [{"node": "crown", "direction": "DIRECTION_Z"}, {"node": "J1-00", "direction": "DIRECTION_Z"},
                                   {"node": "J1-00", "direction": "DIRECTION_ROTATION_Y"}],
                     "fullStateEvery": 5},
    }


if __name__ == "__main__":
    write("market-hall-dome.json", market_hall_dome())
    write("roof-truss-spring-bearings.json", roof_truss_on_spring_bearings())
    write("guyed-mast.json", guyed_mast())
    write("pavilion-lattice-shell.json", lattice_shell_pavilion())
    print("wrote market-hall-dome.json, roof-truss-spring-bearings.json, guyed-mast.json, pavilion-lattice-shell.json")
