/** Paths shared by the browser-test configuration and the specs. */
import path from 'node:path';

/** The repository root. */
export const REPO = path.resolve(__dirname, '..', '..');

/** Where screenshots and other artifacts of the browser tests go (gitignored). */
export const ARTIFACTS = path.join(REPO, 'artifacts', 'ui');
