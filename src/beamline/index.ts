/** The document layer: format v1 and the beam keys of docs/design.md (types, units, reading, writing, edits). */
export type * from './types.ts';
export { math, parseQuantity, dimensionName, isProblem, ATOMIC_MASS_UNIT_KG, type Dimension } from './units.ts';
export { LIMITS, FIRST_SLIT_MIN_DISTANCE, within, type Limit } from './limits.ts';
export { portLabels, stateLabels, defaultGroup, isHyperfine, bareLabels, fLabel, mText, fText, type LabelSpecies, type Group } from './labels.ts';
export { parseJson, lineColumn } from './json.ts';
export { checkBeamline, formatProblem, FORMAT, RESERVED_IDS } from './check.ts';
export { readBeamlineText, checkSize, DEFAULT_MAX_BYTES, type ParseOptions } from './text.ts';
export { parseBeamlineText, validateBeamline, librarySpecies, speciesOfRef } from './validate.ts';
export { readSpin, type SpeciesResolver } from './speciesDoc.ts';
export { CURRENT_VERSION, beamlineMigrations, migrateDoc, checkRegistry, type Migration, type MigrationRegistry, type MigrateResult, type StepResult } from './migrations.ts';
export { serializeDoc } from './serialize.ts';
export { setAt, parsePath, freshId, reroute, addElementOnPort, deleteElement, duplicateElement, renameElement, ID_PREFIX, type EditResult } from './edits.ts';
export { KINDS, KIND_NAMES, outputsOf, type KindModule } from './elements/registry.ts';
export { parameterize, lineWithValues, DISPLAY_UNITS, type ParameterSlot, type ParameterizedLine } from './parameters.ts';
