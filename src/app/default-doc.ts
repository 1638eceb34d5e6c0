// The line a new document starts from: the two-magnet line of docs/design.md "Reference documents" (a
// silver-like bare spin 1/2 at a fixed 600 m/s, a filter magnet, an analyser rolled by 60°, two
// detectors) with this bench's own title and the beam keys a drawing needs: gaps, 5 cm magnets at
// 250 T/m, pole gaps, and detector windows centred where the engine puts the two sub-beams at the
// detector plane 90 cm downstream. Set-points are a demo, not a measured line.

import type { BeamlineDoc } from './core-adapter.ts';

export const NEW_DOCUMENT_TITLE = 'Bench A, new line';

export function newDocument(): BeamlineDoc {
  return {
    format: 'spinyard.beamline',
    version: 1,
    title: NEW_DOCUMENT_TITLE,
    species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
    oven: {
      state: { kind: 'unpolarized' },
      flux: '2e9 /s',
      velocity: { kind: 'fixed', speed: '600 m/s' },
      aperture: { width: '0.2 mm', height: '0.2 mm' },
      to: 'M1',
    },
    elements: [
      { id: 'M1', kind: 'magnet', gap: '30 cm', axis: { theta: '0 deg', phi: '0 deg' }, gradient: '250 T/m', length: '5 cm',
        aperture: { width: '4 mm', height: '2 mm' }, ports: { '+1/2': 'M2', '-1/2': 'stop' } },
      { id: 'M2', kind: 'magnet', gap: '10 cm', axis: { roll: '60 deg' }, gradient: '250 T/m', length: '5 cm',
        aperture: { width: '4 mm', height: '3 mm' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } },
      { id: 'D1', kind: 'detector', gap: '40 cm', efficiency: 0.9, background: '3 /s', dwell: '10 s',
        window: { x: '-0.67 mm', z: '-1.43 mm', width: '0.5 mm', height: '0.8 mm' } },
      { id: 'D2', kind: 'detector', gap: '40 cm', efficiency: 0.9, background: '3 /s', dwell: '10 s',
        window: { x: '0.67 mm', z: '-0.66 mm', width: '0.5 mm', height: '0.8 mm' } },
    ],
  };
}
