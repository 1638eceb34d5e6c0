/** An engine failure that is not the input's fault: exit 1, a one-line message, no stack trace unless asked. */
import { afterEach, describe, expect, it, vi } from 'vitest';

vi.mock('../../src/engine/index.ts', async (orig) => ({
  ...(await orig<typeof import('../../src/engine/index.ts')>()),
  runDocumentText: () => {
    throw new TypeError('matrix dimension mismatch');
  },
}));

const { runCli } = await import('../../src/cli/cli.ts');

describe('runCli on an internal error', () => {
  afterEach(() => {
    delete process.env.SPINYARD_DEBUG;
  });

  it('exits 1 with the message on stderr and nothing on stdout', () => {
    const out = runCli(['run', 'samples/bench-c-roll-calibration.spinyard']);
    expect(out.code).toBe(1);
    expect(out.stdout).toBe('');
    expect(out.stderr).toMatch(/^spinyard: internal error: matrix dimension mismatch/);
    expect(out.stderr).not.toMatch(/\n\s+at /);
  });

  it('adds the stack trace with SPINYARD_DEBUG=1', () => {
    process.env.SPINYARD_DEBUG = '1';
    expect(runCli(['run', 'samples/bench-c-roll-calibration.spinyard']).stderr).toMatch(/\n\s+at /);
  });
});
