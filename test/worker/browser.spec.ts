/**
 * The worker pool's statistics in a real browser: runs test/worker/browser-statistics.mjs
 * (Debian's Chromium, real Web Workers) and checks what it reports.
 */
import { spawnSync } from 'child_process';
import * as path from 'path';

import { ROOT } from './helpers';

describe('EnginePool in Chromium', () => {
  it('should give byte-identical statistics with 1 and 2 Web Workers, equal to analyze() in Node', () => {
    const done = spawnSync(process.execPath, [path.join(ROOT, 'test', 'worker', 'browser-statistics.mjs')], {
      encoding: 'utf8',
      timeout: 240000
    });
    const lines = done.stdout.trim().split('\n');
    const report = JSON.parse(lines[lines.length - 1] || '{}');
    expect(report.error).toBeUndefined();
    expect(report).toEqual({
      workers: [1, 2],
      oneEqualsTwo: true,
      browserEqualsNode: true,
      hasStatistics: true,
      errors: []
    });
    expect(done.status).toBe(0);
  }, 300000);
});
