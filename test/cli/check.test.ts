import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { EXAMPLE_AIRFRAME_PATH, exampleAirframeJson } from '../helpers/airframes.js';
import { runCli } from '../helpers/run-cli.js';

// Fixtures are invented test flights (not real data), see test/cli/review.test.ts for review-flight.ndjson:
// it holds two warning events (stall 11.0–13.0 s, structure 20.5–21.0 s) and six cautions.
// review-clean.ndjson: 14 m/s, 120 m, nz 1.0 then 1.2 (stall utilization 1.2·31.381/(0.5·1.211·196·0.55·1.2)
// = 0.48, hand computation) — no caution; one bad line.
const FLIGHT = 'test/fixtures/review-flight.ndjson';
const CLEAN = 'test/fixtures/review-clean.ndjson';

describe('turnmargin check (built CLI)', () => {
  it('exits 1 when an event reaches warning (the default level), with a one-screen summary', async () => {
    const r = await runCli(['check', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0']);
    expect(r.code).toBe(1);
    const lines = r.stdout.trimEnd().split('\n');
    expect(lines.length).toBeLessThanOrEqual(24);
    expect(r.stdout).toContain('lines 307: 301 accepted, 6 rejected');
    expect(r.stdout).toMatch(/WARNING\s+stall\s+11\.00\s+13\.00/);
    expect(lines[lines.length - 1]).toBe('FAIL: 2 events reached warning');
  });

  it('exits 0 on a clean flight, reporting its rejected line without failing on it', async () => {
    const r = await runCli(['check', CLEAN, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--fail-on', 'caution']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('51 accepted, 1 rejected');
    expect(r.stdout).toContain('rejected lines (reported, not failing)');
    expect(r.stdout.trimEnd().endsWith('PASS: no event reached caution')).toBe(true);
  });

  it('fails on cautions only with --fail-on caution', async () => {
    // A flight with cautions but no warning: raise the warning thresholds above the fixture's peaks
    const dir = mkdtempSync(join(tmpdir(), 'turnmargin-check-'));
    const th = join(dir, 'thresholds.json');
    writeFileSync(th, JSON.stringify({ stall_warning: 0.99, structure_warning: 0.99 }));
    // --smooth 0: with the TAS smoothed, the drop to 3 m/s at 27 s is not instant and the pull there is flown
    const warningOnly = await runCli([
      'check',
      FLIGHT,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--thresholds',
      th,
      '--smooth',
      '0',
    ]);
    expect(warningOnly.code).toBe(0);
    const cautionToo = await runCli([
      'check',
      FLIGHT,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--thresholds',
      th,
      '--fail-on',
      'caution',
    ]);
    expect(cautionToo.code).toBe(1);
    expect(cautionToo.stdout).toMatch(/FAIL: \d+ events reached caution or warning/);
  });

  it('exits 2 when nothing could be checked, naming the likely cause (grams typed for kilograms)', async () => {
    // mass_kg 3200 instead of 3.2: Vs1 ≈ 278 m/s at 120 m (stall speed relation) while the clean flight flies 14 m/s,
    // so no frame is flying and no limit is computed: that is not a pass.
    const dir = mkdtempSync(join(tmpdir(), 'turnmargin-check-'));
    const heavy = join(dir, 'grams.json');
    writeFileSync(heavy, JSON.stringify({ ...exampleAirframeJson(), mass_kg: 3200 }));
    for (const command of ['check', 'review']) {
      const r = await runCli([command, CLEAN, '--aircraft', heavy]);
      expect(r.code).toBe(2);
      expect(r.stdout).not.toContain('PASS');
      expect(r.stderr).toMatch(
        /no frame was flying .*: stall speed 2\d\d m\/s is above every speed flown \(14–14 m\/s\): is mass_kg in kilograms\?/,
      );
    }
  });

  it('exits 2 for unusable input: no accepted frame, unreadable file, invalid airframe, bad option', async () => {
    const allBad = await runCli(['check', 'test/fixtures/review-all-bad.ndjson', '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(allBad.code).toBe(2);
    expect(allBad.stderr).toContain('no accepted frame');

    const missing = await runCli(['check', 'nowhere.ndjson', '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toContain('nowhere.ndjson: cannot read the telemetry file');

    const dir = mkdtempSync(join(tmpdir(), 'turnmargin-check-'));
    const badAirframe = join(dir, 'airframe.json');
    writeFileSync(badAirframe, JSON.stringify({ ...exampleAirframeJson(), mass_kg: 'heavy' }));
    const invalid = await runCli(['check', CLEAN, '--aircraft', badAirframe]);
    expect(invalid.code).toBe(2);
    expect(invalid.stderr).toContain('mass_kg');

    const badLevel = await runCli(['check', CLEAN, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--fail-on', 'advisory']);
    expect(badLevel.code).toBe(2);
    expect(badLevel.stderr).toContain('--fail-on must be one of caution, warning (got "advisory")');

    const noFile = await runCli(['check', '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(noFile.code).toBe(2);
    expect(noFile.stderr).toContain('the telemetry FILE to read is missing');
  });
});
