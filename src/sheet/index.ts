/** The setup sheet: its model (plain data) and its printable HTML, shared by the app and the CLI. */
export { buildSheet, writtenValue, DEFERENCE, BARE_SPIN_CAUTION, type SheetModel, type SheetSpecies, type SheetConstant, type SheetOven, type SheetElement, type SheetSetPoint, type SheetLeaf, type SheetDetector, type SheetSource } from './model.ts';
export { sha256, sha256Hex, utf8Bytes } from './sha256.ts';
export { sheetHtml, sideViewSvg, escapeHtml, sheetNumber, durationIn } from './html.ts';
