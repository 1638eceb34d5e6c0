/**
 * The engine's steps, one per element kind (docs/design.md "Keys by element kind"; DEVELOPERS.md "Adding an
 * element kind"). The walk (../walk.ts) calls the step of each element it reaches; a kind without a step here
 * fails the type check.
 */
import type { Steps } from './step.ts';
import { magnetStep } from './magnet.ts';
import { rotatorStep } from './rotator.ts';
import { fieldStep } from './field.ts';
import { twistStep } from './twist.ts';
import { rfStep } from './rf.ts';
import { recombinerStep } from './recombiner.ts';
import { slitStep } from './slit.ts';
import { detectorStep } from './detector.ts';

export const STEPS: Steps = {
  magnet: magnetStep,
  rotator: rotatorStep,
  field: fieldStep,
  twist: twistStep,
  rf: rfStep,
  recombiner: recombinerStep,
  slit: slitStep,
  detector: detectorStep,
};
