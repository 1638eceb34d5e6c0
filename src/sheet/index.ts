/** The setup sheet: its model (plain data) and its printable HTML, shared by the app and the CLI. */
export { buildSheet, writtenValue, DEFERENCE, BARE_SPIN_CAUTION, type SheetModel, type SheetSpecies, type SheetConstant, type SheetOven, type SheetElement, type SheetSetPoint, type SheetLeaf, type SheetDetector } from './model.ts';
export { sheetHtml, sideViewSvg, escapeHtml, sheetNumber, durationIn } from './html.ts';
