/** Help texts of the command line. */

export const USAGE = `spinyard: plan an atomic-beam Stern–Gerlach line from a beamline file (.spinyard)

Usage:
  spinyard run FILE [--json] [--accept-cost]
                                      yields, rates, detector plane and counts of every leaf
  spinyard sheet FILE [-o OUT.pdf|OUT.html] [--paper a4|letter]
                                      the setup sheet of the line: printable HTML on stdout, or a file
  spinyard scan FILE --param NAME --from A --to B --points N [--json|--csv] [-o OUT]
                                      the line over one set-point (or a grid of two): yields, counts
  spinyard budget FILE [--draws N] [--seed S] [--workers N] [--json] [-o OUT]
                                      tolerance budget: which set-point's tolerance moves which detector
  spinyard fit FILE --data counts.csv --free NAME,… [--json] [-o fitted.spinyard]
                                      fit set-points (and the oven state) to measured counts
  spinyard simulate FILE [--atoms N] [--seed S] [--json] [-o OUT | --hits CSV]
                                      atoms drawn one by one through the line: counts and hit maps
  spinyard validate FILE              check a beamline file; list every problem as "path: message"
  spinyard levels NAME --field B [--json]
                                      energies (Hz) and moments (μB) of a library species at field B
  spinyard species [NAME]             the species library, or one species with sources and cautions
  spinyard help [COMMAND]             this text, or the help of one command
  spinyard --version                  the version

Every command also takes --help. Exit codes: 0 success, 2 invalid input (messages on stderr,
nothing on stdout), 1 internal error. No command changes a file; only -o writes one (sheet, scan,
budget, fit, simulate), the file it is given.
`;

export const COMMAND_HELP: Readonly<Record<string, string>> = {
  run: `Usage: spinyard run FILE [--json] [--accept-cost]

Runs the beamline in FILE and prints
  the leaves: path (ELEMENT:PORT of every magnet passed), target, yield (fraction of the oven flux),
    rate (/s: flux × yield × efficiency × captured), and where the line has geometry the mean
    displacement x, z and rms spread at the detector plane (mm) and the fraction captured by the window;
  the detectors: yield, rate with the background counted once, counts ± σ for the dwell,
    signal-to-background and the time to reach 1 % on the signal;
  then crosstalk and neighbouring sub-beams on the detector plane, the lost fraction, the warnings
  and the velocity quadrature used.

  --json         print the result (format spinyard.result, version 1) as JSON and nothing else
  --accept-cost  run even where the estimated time is above 10 s (without it such a run stops at once
                 with the estimate and the element that makes it expensive); a run estimated above
                 1 h or 4 GB is refused either way
`,
  sheet: `Usage: spinyard sheet FILE [-o OUT.pdf|OUT.html] [--paper a4|letter] [--accept-cost]

Runs the beamline in FILE and makes its setup sheet for the bench: species and constants with sources,
oven, a to-scale side view, every element in beam order with its position from the oven aperture and
its set-points with units and blank measured / checked by / date cells, the expected leaves and
detector counts, warnings, cautions and sign-off lines. Every printed page carries the file name, a
short hash of the file's content and "page n of m".

Without -o the sheet is one self-contained HTML document on stdout and no file is written.
  -o, --output OUT   write the sheet to OUT: OUT.pdf is printed by a headless Chromium (SPINYARD_BROWSER,
                     else a system Chromium or Chrome, else the one installed with Spinyard's npm
                     packages; offline), OUT.html is the HTML. OUT is replaced atomically, never the
                     input document, and nothing is left behind when printing fails.
  --paper a4|letter  the paper size (default a4)
  --accept-cost      run a line whose estimated time is above 10 s (as spinyard run --accept-cost)

Exit 2 when no browser is found for a PDF, 1 when the browser fails to print or OUT cannot be written.
`,
  scan: `Usage: spinyard scan FILE --param NAME --from A --to B --points N [--log NAME]
                       [--param NAME2 --from A2 --to B2 --points N2] [--json | --csv] [-o OUT]

Runs the beamline in FILE at every value of one set-point, or on the grid of two, and prints per point
the yield and the counts ± σ (for the detector's dwell, background included) of every detector; --json
and --csv add each detector's rate and signal and each leaf's yield, rate and captured fraction.

A set-point is named by the element's id and its key as the document writes them: M2.axis.roll,
M2.axis.theta, F1.field.x, T1.length, S1.width, D1.efficiency, and for the source oven.flux,
oven.velocity.temperature, oven.velocity.speed. An axis keeps the angles it is written with (a roll,
or θ and φ). "spinyard scan FILE --param list" lists every set-point of FILE with its value.

  --param NAME     the set-point to scan; give it twice for a grid (the first is the outer loop)
  --from A --to B  the ends, with a unit of the set-point's kind ("0 deg", "2.5 mT", "600 K"); a plain
                   number for a plain-number set-point (an efficiency)
  --points N       the number of values, ends included
  --log NAME       space NAME's values by equal ratios (both ends non-zero and of one sign)
  --json           the scan as JSON (format spinyard.scan, version 1)
  --csv            the scan as CSV, one row per point, units in the header
  -o, --output OUT write the output to OUT (atomically; never over FILE) instead of stdout
  --stored N       run the N-th scan kept in the document ("scans"); without --param a document
                   that keeps one scan runs it
  --workers N      evaluate the points in N threads (default: one per core from 200 points
                   on, started once the scan's pace says it takes more than a few seconds, else
                   1); the result is the same for any N (a scan of a magnet's set-point, whose
                   rows are formed together, runs in one thread)
  --accept-cost    scan a line whose run is estimated above 10 s (as spinyard run --accept-cost)

A value the document's reader refuses (a bound, a first slit moved onto the oven) leaves that point
without a result and says why; the other points are computed. The k-th --from, --to and --points
belong to the k-th --param.
`,
  budget: `Usage: spinyard budget FILE [--draws N] [--seed S] [--workers N] [--json] [-o OUT]

The tolerance budget of the line in FILE, from the tolerances the document keeps:
  "tolerances": [ {"parameter": "M2.axis.roll", "halfWidth": "0.5 deg", "distribution": "uniform"}, … ]
(a set-point by id and key, as for spinyard scan; uniform within ± halfWidth, or normal with σ = halfWidth).

For every detector's signal (counts/s, background excluded) it prints the sensitivity to each tolerance
(central differences at ±σ and ±σ/2, Richardson-extrapolated, with an error estimate), the combined
first-order σ (root sum of squares), a Monte Carlo over all tolerances at once (mean, σ, 5 % and 95 %
quantiles), a note where the two disagree (the signal is not linear over the tolerances), and the
(detector, tolerance) pairs ranked by their relative effect.

  --draws N   Monte Carlo draws (default 1000; 0 for the first-order budget only)
  --seed S    the generator's seed (default 1): the same seed gives the same figures
  --json      the budget as JSON (format spinyard.budget, version 1)
  --workers N evaluate in N threads (default: one per core from 200 evaluations on, started once
              the budget's pace says it takes more than a few seconds, else 1); the budget is the
              same for any N
  -o OUT      write the output to OUT (atomically; never over FILE)
  --accept-cost  run a line whose run is estimated above 10 s (as spinyard run --accept-cost)
`,
  fit: `Usage: spinyard fit FILE --data counts.csv --free NAME[=LO..HI],…[,oven.state] [--json] [-o fitted.spinyard]

Fits set-points of the line in FILE to measured counts by Poisson maximum likelihood: the expected
counts of a reading are (signal + background) × dwell at its set-points.

The data is a CSV file, one row per detector reading (lines starting with # are skipped):
  detector,counts,dwell [s],M3.axis.roll [deg]
  D1,84113,10,0
"detector" is an id of the line, "counts" a whole number; "dwell [unit]" is optional (else the
detector's dwell); every other column is a set-point that differs between readings, named as a
parameter of the line (spinyard scan FILE --param list) with its unit in brackets.

  --free LIST   the set-points to fit, separated by commas, each optionally with bounds
                NAME=LO..HI ("M2.axis.roll=0 deg..90 deg"); oven.state fits the oven's state over its
                zero-field states (along the state's axis, else z): for a bare spin its density matrix,
                kept positive (ρ = T T†/Tr); for a hyperfine species its populations, ≥ 0, summing to 1
  --json        the fit as JSON (format spinyard.fit, version 1)
  -o OUT        also write the document with the fitted values to OUT (atomically; never over
                FILE or the data)
  --stored N    run the N-th fit kept in the document ("fits": data file relative to the document,
                set-points with optional bounds, state); without --data and --free a document that
                keeps one fit runs it
  --accept-cost fit a line whose run is estimated above 10 s (as spinyard run --accept-cost)

Prints the fitted values with σ from the Fisher information, profile-likelihood intervals (where the
deviance rises by 1; marked when asymmetric), the correlations, the deviance with its χ² p-value and
every reading's residual.
`,
  simulate: `Usage: spinyard simulate FILE [--atoms N] [--seed S] [--json] [-o OUT | --hits CSV]

A simulated run of the line in FILE: atoms drawn one by one from the oven (isotope by abundance, speed
from the beam's velocity distribution, a start point in the oven aperture and a direction through the
first slit), each following one path with the Born-rule probabilities of its own speed, deflected by
the magnets, clipped by slits, pole gaps and windows, landing on its detector's plane.

Prints per detector the atoms in its window, the signal they give (counts/s, with the standard error of
the sampling) beside the engine's, the counts of one run of its dwell with Poisson noise and
background, and the mean and rms of the hits; --json adds a hit map of each detector's plane.

  --atoms N   atoms drawn (default 100000)
  --seed S    the generator's seed (default 1): the same seed gives the same run
  --stored N  the atoms and seed of the N-th simulation kept in the document ("simulations"); a
              document that keeps one uses it unless --atoms or --seed is given
  --json      the simulation as JSON (format spinyard.simulation, version 1)
  -o OUT      write the output to OUT (atomically; never over FILE)
  --hits CSV  write every hit to CSV, one row per atom that reached a detector's window:
              detector, x and z on its plane (mm), the atom's speed (m/s); the report goes to stdout
  --accept-cost  simulate a line whose run is estimated above 10 s (as spinyard run --accept-cost)
`,
  validate: `Usage: spinyard validate FILE

Checks FILE against the beamline format (spinyard.beamline, version 1) without running it. Prints
"FILE: valid" and any warnings (exit 0), or every problem as "path: message" on stderr (exit 2).
`,
  levels: `Usage: spinyard levels NAME --field B [--json]

Lists the eigenstates of the species NAME (a library name such as Rb-87, Cs-133 or the mixture Ag)
at the field size B along z: energy E/h of H as written (traceless), μ_eff = −∂E/∂B in μB, and the
low-field (F, m_F) and high-field (m_J, m_I) labels.

  --field B   field size with a unit, e.g. "0.5 T", "120 G", "3 mT"
  --json      print the levels listing as JSON (species, field in T, levels)
`,
  species: `Usage: spinyard species [NAME]

Without NAME: a table of the species library. With NAME: every number of that species (I, J, g_J,
g_I, A, B, mass, abundance, vapour pressure) with its source, then its cautions and the line cautions.
`,
  help: `Usage: spinyard help [COMMAND]

Prints the overview, or the help of COMMAND (run, sheet, scan, budget, fit, simulate, validate, levels, species).
`,
};
