/**
 * `spinyard fit FILE --data counts.csv --free NAME[=LO..HI],…[,oven.state] [--json] [-o fitted.spinyard]`:
 * Poisson maximum-likelihood fit of set-points (and the oven's state: its density matrix for a species without
 * hyperfine structure, else its populations) to measured counts
 * (src/engine/fit.ts). The fitted document is written only where -o asks, never over FILE or the data.
 */
import { serializeDoc } from '../beamline/index.ts';
import type { BeamlineDoc, FitStudy } from '../beamline/types.ts';
import { dirname, join } from 'node:path';
import { compile, parameter, parameterValue, RunError, type Plan } from '../engine/index.ts';
import { fit, type FitResult, type FreeParameter } from '../engine/fit.ts';
import { fittedDocument as writeFitted } from '../engine/fitted.ts';
import { readMeasurements } from '../engine/measurements.ts';
import { alignTable, formatNumber } from './format.ts';
import { formatColumn } from '../beamline/numbers.ts';
import { costGate, problemsOut } from './common.ts';
import { isSameFile } from './output.ts';
import { type CliOutput, bad, ok } from './quick.ts';
import { readBeamlineFile } from './readFile.ts';

export const FIT_OPTIONS = [
  { name: 'stored', value: true },
  { name: 'data', value: true },
  { name: 'free', value: true },
  { name: 'json', value: false },
  { name: 'output', value: true, short: 'o' },
  { name: 'accept-cost', value: false },
] as const;

const err = (m: string) => bad(`spinyard fit: ${m}`, 'Run "spinyard fit --help" for its use.');

/** "M2.axis.roll=0 deg..90 deg,oven.flux,oven.state" → parameters with SI bounds, and whether the state is fitted. */
export function parseFree(plan: Plan, text: string): { free: FreeParameter[]; state: boolean } {
  const free: FreeParameter[] = [];
  let state = false;
  for (const part of text.split(',').map((s) => s.trim()).filter((s) => s !== '')) {
    if (part === 'oven.state') {
      state = true;
      continue;
    }
    const eq = part.indexOf('=');
    const name = (eq < 0 ? part : part.slice(0, eq)).trim();
    const slot = parameter(plan, name);
    if (eq < 0) {
      free.push({ name: slot.name });
      continue;
    }
    const range = part.slice(eq + 1).split('..');
    if (range.length !== 2) throw new RunError(`--free ${name}: bounds are written LO..HI with units, e.g. "${name}=0 ${slot.unit}..10 ${slot.unit}"`);
    const [lo, hi] = range.map((r) => r.trim());
    free.push({ name: slot.name, ...(lo ? { lower: parameterValue(slot, lo, `--free ${name} (lower bound)`) } : {}), ...(hi ? { upper: parameterValue(slot, hi, `--free ${name} (upper bound)`) } : {}) });
  }
  if (!free.length && !state) throw new RunError('--free: name at least one set-point (e.g. M2.axis.roll) or oven.state');
  return { free, state };
}

/** The document with the fitted values written in (src/engine/fitted.ts, the same as the app's "apply"). */
export function fittedDocument(doc: BeamlineDoc, f: FitResult): BeamlineDoc {
  const r = writeFitted(doc, f);
  if (!r.ok) throw new RunError(`fit: ${r.message}`);
  return r.doc;
}

export function fitText(f: FitResult, file: string, data: string): string {
  const out = [`Fit of ${f.title || '(untitled)'}  [${file}] to ${f.readings} readings of ${data}`, ''];
  const shown = (v: number, p: { unit: string; factor: number }, sig = 6) => `${formatNumber(v / p.factor, sig)}${p.unit ? ` ${p.unit}` : ''}`;
  if (f.parameters.length) {
    const rows = [['parameter', 'fitted', '± σ', 'profile interval (ΔD = 1)', 'document']];
    for (const p of f.parameters) {
      const prof = p.profile ? `${p.profile.lower !== undefined ? shown(p.profile.lower, p) : '…'} to ${p.profile.upper !== undefined ? shown(p.profile.upper, p) : '…'}${p.profile.asymmetric ? ' (asymmetric)' : ''}` : '-';
      rows.push([p.name, shown(p.value, p, 7), p.sigma !== undefined ? shown(p.sigma, p, 2) : p.atBound ? 'at its bound' : '-', prof, shown(p.start, p)]);
    }
    out.push(alignTable(rows, [false, true, true, false, true]), '');
  }
  if (f.density) {
    const dm = f.density;
    const cell = (v: number, sg: number | null) => `${formatNumber(v, 5)}${sg === null ? ' (undetermined)' : ` ± ${formatNumber(sg, 2)}`}`;
    out.push(`Oven state: density matrix over the zero-field states along ${dm.axis} (ρ = T T†/Tr, T a Cholesky factor)`);
    const rows = [['ρ', ...dm.basis]];
    dm.basis.forEach((a, i) => rows.push([`Re ${a}`, ...dm.basis.map((_, j) => cell(dm.re[i][j], dm.sigmaRe[i][j]))]));
    dm.basis.forEach((a, i) => rows.push([`Im ${a}`, ...dm.basis.map((_, j) => (i === j ? '0' : cell(dm.im[i][j], dm.sigmaIm[i][j])))]));
    out.push(alignTable(rows, rows[0].map((_, i) => i > 0)));
    const pol = dm.polarization;
    const ps = (v: number, sg: number | null) => cell(v, sg);
    out.push(`eigenvalues ${dm.eigenvalues.map((v) => formatNumber(v, 4)).join(', ')}; purity Tr ρ² = ${ps(dm.purity, dm.puritySigma)}`);
    out.push(`${dm.basis.length === 2 ? 'Bloch vector' : 'polarization ⟨J⟩/j'} (lab x, y, z): ${ps(pol.x, pol.sigma.x)}, ${ps(pol.y, pol.sigma.y)}, ${ps(pol.z, pol.sigma.z)}`);
    out.push(`the readings determine ${dm.determined} of the ${dm.parameters} real parameters of ρ`, '');
  } else if (f.state) {
    const rows = [['oven state', 'population', '± σ']];
    const pops = formatColumn(f.state.populations, { figures: 5 });
    const sigmas = formatColumn(f.state.sigma.map((x) => (x === null ? undefined : x)), { figures: 2 }, { blank: '-' });
    f.state.labels.forEach((l, i) => rows.push([`${l} (along ${f.state!.axis})`, pops[i], sigmas[i]]));
    out.push(alignTable(rows, [false, true, true]), '');
  }
  if (f.coordinates.length > 1) {
    out.push('Correlations');
    const rows = [['', ...f.coordinates.map((_, i) => `${i + 1}`)]];
    f.correlation.forEach((r, i) => rows.push([`${i + 1} ${f.coordinates[i]}`, ...r.map((c) => (c === null ? '-' : c.toFixed(3)))]));
    out.push(alignTable(rows, rows[0].map((_, i) => i > 0)), '');
  }
  out.push(`Goodness of fit: deviance ${formatNumber(f.deviance, 5)} on ${f.degreesOfFreedom} degrees of freedom${f.pValue !== undefined ? `, p = ${formatNumber(f.pValue, 3)}` : ''}`);
  out.push(`${f.converged ? 'Converged' : 'Not converged'} in ${f.iterations} iterations.`, '', 'Residuals (Pearson (n − μ)/√μ and deviance)');
  const rows = [['line', 'detector', 'counts', 'expected', 'Pearson', 'deviance']];
  // by the one rule per column (src/beamline/numbers.ts): one count of figures and one notation down each column
  const expected = formatColumn(f.residuals.map((r) => r.expected), { figures: 7 });
  const pearson = formatColumn(f.residuals.map((r) => r.pearson), { figures: 3 });
  const deviance = formatColumn(f.residuals.map((r) => r.deviance), { figures: 3 });
  f.residuals.forEach((r, i) => rows.push([String(r.line), r.detector, String(r.counts), expected[i], pearson[i], deviance[i]]));
  out.push(alignTable(rows, [true, false, true, true, true, true]), '', `Method: ${f.method}.`);
  if (f.warnings.length) out.push('', 'Warnings', ...f.warnings.map((w) => `  - ${w}`));
  return `${out.join('\n')}\n`;
}

export function cmdFitWith(file: string, text: string, options: Record<string, unknown>): CliOutput {
  const c0 = compile(text);
  if (!c0.ok) return problemsOut(file, c0.problems);
  const gate = costGate(file, c0.plan, options['accept-cost'] === true);
  if (gate) return gate;
  const kept = c0.plan.line.fits ?? [];
  let stored: FitStudy | undefined;
  if (options.data === undefined && options.free === undefined && kept.length) {
    const k = typeof options.stored === 'string' ? Number(options.stored) : kept.length === 1 ? 1 : NaN;
    if (!Number.isInteger(k) || k < 1 || k > kept.length) {
      return bad(`spinyard fit: ${typeof options.stored === 'string' ? `--stored ${options.stored}: ` : ''}${file} keeps ${kept.length} fits; choose one with --stored N:`, ...kept.map((f, i) => `  ${i + 1}: ${f.title || f.data}`));
    }
    stored = kept[k - 1];
  } else if (options.stored !== undefined) return err('--stored and --data/--free: a kept fit has its own data and set-points; give one or the other');
  // a kept fit's data file is relative to the document's folder
  const dataFile = stored ? join(dirname(file), stored.data) : options.data;
  if (typeof dataFile !== 'string') return err('missing --data, the CSV of measured counts (detector,counts,… one row per reading)');
  if (!stored && typeof options.free !== 'string') return err('missing --free, the set-points to fit (e.g. --free M2.axis.roll,oven.flux; oven.state for the oven\'s populations)');
  const output = options.output;
  if (typeof output === 'string') {
    if (output === '') return err('-o: the output file name is empty');
    if (isSameFile(file, output)) return err(`-o ${output} is the input document ${file}; the fitted document is never written over it`);
    if (isSameFile(dataFile, output)) return err(`-o ${output} is the data file; the fitted document is never written over it`);
  }
  const c = c0;
  const data = readBeamlineFile(dataFile);
  if (!data.ok) return err(data.message);
  let f: FitResult;
  try {
    const { free, state } = stored
      ? { free: stored.free.map((f) => ({ name: f.name, ...(f.lower !== undefined ? { lower: f.lower } : {}), ...(f.upper !== undefined ? { upper: f.upper } : {}) })), state: stored.state }
      : parseFree(c.plan, options.free as string);
    f = fit(c.plan, readMeasurements(data.text, c.plan, dataFile), { free, state, acceptCost: true });
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  const body = options.json ? `${JSON.stringify(f, null, 2)}\n` : fitText(f, file, dataFile);
  if (typeof output === 'string') {
    return { code: 0, stdout: body, stderr: '', file: { path: output, format: 'text', html: serializeDoc(fittedDocument(c.plan.doc, f)), input: file, what: 'fitted document', command: 'fit' } };
  }
  return ok(body);
}
