/**
 * The two reference documents of docs/design.md ("Reference documents"), kept as written (tests rely on them):
 * DESIGN_V1 the two-magnet spin-1/2 line, DESIGN_BEAM_KEYS the Rb-87 line.
 */
export const DESIGN_V1 = `{
  "format": "spinyard.beamline",
  "version": 1,
  "title": "Bench B, roll scan",
  "species": { "spin": "1/2", "g": 2.00231930436, "mass": "106.905 u" },
  "oven": {
    "state": { "kind": "unpolarized" },
    "flux": "2e9 /s",
    "velocity": { "kind": "fixed", "speed": "600 m/s" },
    "to": "M1"
  },
  "elements": [
    { "id": "M1", "kind": "magnet", "axis": { "theta": "0 deg", "phi": "0 deg" },
      "ports": { "+1/2": "M2", "-1/2": "stop" } },
    { "id": "M2", "kind": "magnet", "axis": { "roll": "60 deg" },
      "ports": { "+1/2": "D1", "-1/2": "D2" } },
    { "id": "D1", "kind": "detector", "efficiency": 0.9, "background": "3 /s", "dwell": "10 s" },
    { "id": "D2", "kind": "detector", "efficiency": 0.9, "background": "3 /s", "dwell": "10 s" }
  ]
}`;

export const DESIGN_BEAM_KEYS = `{ "species": "Rb-87",
  "oven": { "state": { "kind": "unpolarized" },
            "velocity": { "kind": "effusive", "temperature": "400 K" },
            "flux": "5e8 /s",
            "aperture": { "width": "0.2 mm", "height": "3 mm" },
            "to": "S1" },
  "elements": [
    { "id": "S1", "kind": "slit", "gap": "30 cm", "width": "0.1 mm", "height": "3 mm", "to": "M1" },
    { "id": "M1", "kind": "magnet", "gap": "5 cm", "axis": { "roll": "0 deg" }, "field": "0.8 T",
      "gradient": "1000 T/m", "length": "10 cm", "group": "mJ",
      "ports": { "mJ=+1/2": "F1", "mJ=-1/2": "stop" } },
    { "id": "F1", "kind": "field", "gap": "2 cm", "field": { "x": "5 uT", "y": "0 T", "z": "0 T" },
      "length": "5 cm", "to": "T1" },
    { "id": "T1", "kind": "twist", "gap": "1 cm", "field": "0.2 mT", "start": { "roll": "0 deg" },
      "end": { "roll": "90 deg" }, "length": "4 cm", "to": "M2" },
    { "id": "M2", "kind": "magnet", "gap": "2 cm", "axis": { "roll": "90 deg" }, "field": "0.8 T",
      "gradient": "1000 T/m", "length": "10 cm", "group": "each",
      "ports": { "F=2,mF=+2": "D1", "F=2,mF=+1": "D2", "*": "stop" } },
    { "id": "D1", "kind": "detector", "gap": "40 cm", "efficiency": 0.95, "background": "20 /s",
      "dwell": "30 s", "window": { "x": "1.1 mm", "z": "0 mm", "width": "0.3 mm", "height": "4 mm" } }
  ] }`;

/**
 * The beam-keys example is an excerpt: it has no header and routes to a detector D2 it does not list.
 * This completes it the least way: the v1 header, and D2 as a second detector like D1 at another window.
 */
export function completedBeamKeys(): Record<string, unknown> {
  const d = JSON.parse(DESIGN_BEAM_KEYS) as { elements: Record<string, unknown>[] };
  const d1 = d.elements.find((e) => e.id === 'D1')!;
  const d2 = { ...d1, id: 'D2', window: { x: '0.6 mm', z: '0 mm', width: '0.3 mm', height: '4 mm' } };
  return { format: 'spinyard.beamline', version: 1, ...d, elements: [...d.elements, d2] };
}

/** A small valid bare-spin line to mutate in tests. */
export function bareLine(): Record<string, any> {
  return JSON.parse(DESIGN_V1) as Record<string, any>;
}
