// Before any test file: find the browser once (unpacking the npm package's Chromium if that is the one),
// so that the browser tests in parallel workers find it ready, and say which browser the run uses.
import { findBrowser } from '../src/cli/find-browser.ts';

export default async function setup(): Promise<void> {
  const b = await findBrowser();
  console.log(`browser tests use the ${b.description}`);
}
