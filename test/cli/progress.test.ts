/** Progress output: durations, rate and time left, the in-progress list, and the plain log lines. */
import { describe, expect, it } from 'vitest';
import { PassThrough } from 'node:stream';
import { batchNotes, formatDuration, makeProgress, progressFields, sessionLine } from '../../src/cli/progress.js';
import type { SessionSummary } from '../../src/output/summary.js';

describe('formatDuration', () => {
  it.each([
    [0, '0s'],
    [44.6, '45s'],
    [60, '1m00s'],
    [185, '3m05s'],
    [7620, '2h07m'],
    [NaN, '?'],
    [-1, '?'],
  ])('%s s → %s', (sec, text) => expect(formatDuration(sec)).toBe(text));
});

describe('progressFields', () => {
  it('rate and time left from the sessions done so far', () => {
    expect(progressFields(10, 40, 20, [])).toEqual({ rate: '30.0/min', eta: '1m00s', current: '' });
    expect(progressFields(30, 40, 10, ['a'])).toEqual({ rate: '3.0/s', eta: '3s', current: 'a' });
    expect(progressFields(0, 40, 5, ['a', 'b'])).toEqual({ rate: '–', eta: '?', current: 'a, b' });
    expect(progressFields(40, 40, 5, []).eta).toBe('0s');
  });
  it('the in-progress list is cut to the width with a count of the rest', () => {
    const names = ['site-a/morning', 'site-a/evening', 'site-b/morning', 'site-c/x'];
    const f = progressFields(1, 9, 1, names, 34);
    expect(f.current).toBe('site-a/morning, site-a/evening +2');
    expect(progressFields(1, 9, 1, ['a-very-long-session-name-indeed'], 10).current).toBe('a-very-long-session-name-indeed');
  });
});

const ok: SessionSummary = {
  name: 'day1/van',
  input: 'day1/van.csv',
  status: 'ok',
  warnings: [],
  elapsedSec: 1.25,
  metrics: { fixCount: 900, outlierCount: 7, bridgedCount: 3 } as SessionSummary['metrics'],
};
const failed: SessionSummary = { name: 'bad', input: 'bad.csv', status: 'failed', reason: 'bad.csv:1: empty file', warnings: [] };

describe('plain lines (not a terminal)', () => {
  it('one line per session, the plan and the notes', () => {
    expect(sessionLine(ok, 2, 5)).toBe('[2/5] day1/van: ok  900 fixes, 7 flagged, 3 bridged (1.3 s)');
    expect(sessionLine(failed, 3, 5)).toBe('[3/5] bad: FAILED  bad.csv:1: empty file');
    const out = new PassThrough();
    const err = new PassThrough();
    const p = makeProgress({ quiet: false, tty: false, out, err });
    p.onEvent({ type: 'plan', sessions: 5, toProcess: 2, upToDate: 3, shard: { index: 2, count: 4 } });
    p.onEvent({ type: 'start', name: 'day1/van', input: 'day1/van.csv' });
    p.onEvent({ type: 'done', session: ok, done: 1, total: 2 });
    p.onEvent({ type: 'note', message: 'removed 2 temporary file(s) left by an interrupted run' });
    p.stop();
    expect(String(out.read())).toBe(
      '5 session(s) (shard 2/4): 2 to process, 3 up to date\n' +
        '[1/2] day1/van: ok  900 fixes, 7 flagged, 3 bridged (1.3 s)\n' +
        'removed 2 temporary file(s) left by an interrupted run\n',
    );
    expect(err.read()).toBeNull();
  });
  it('--quiet prints nothing', () => {
    const out = new PassThrough();
    const p = makeProgress({ quiet: true, tty: false, out, err: out });
    p.onEvent({ type: 'done', session: failed, done: 1, total: 1 });
    expect(out.read()).toBeNull();
  });
  it('on a terminal: a bar with done/total, rate, time left and the sessions in progress', () => {
    const err = new PassThrough() as PassThrough & { isTTY: boolean; columns: number; cursorTo: () => boolean; clearLine: () => boolean; moveCursor: () => boolean };
    err.isTTY = true;
    err.columns = 160;
    err.cursorTo = () => true;
    err.clearLine = () => true;
    err.moveCursor = () => true;
    const p = makeProgress({ quiet: false, tty: true, out: new PassThrough(), err });
    p.onEvent({ type: 'plan', sessions: 4, toProcess: 4, upToDate: 0 });
    p.onEvent({ type: 'start', name: 'day1/van', input: 'day1/van.csv' });
    p.onEvent({ type: 'done', session: { ...ok, name: 'other' }, done: 1, total: 4 });
    p.stop();
    const text = String(err.read());
    expect(text).toMatch(/1\/4 sessions \| [\d.]+\/(s|min) \| ETA \S+ \| day1\/van/);
  });
});

describe('warnings, fallbacks and stale outputs on the line', () => {
  const warned: SessionSummary = {
    ...ok,
    warnings: [
      { file: 'day1/van.csv', line: 12, code: 'row-skipped', message: 'time "x" is not ISO 8601' },
      { file: 'day1/van.csv', code: 'rows-sorted', message: '1 row(s) out of time order; rows sorted by time' },
    ],
    info: { calibration: { status: 'fallback', reason: 'only 120 s of fixes (needs 180 s)' } },
  };
  it('counts on the line, details with verbose', () => {
    expect(sessionLine(warned, 1, 1)).toBe('[1/1] day1/van: ok  900 fixes, 7 flagged, 3 bridged; 2 warnings, calibration fallback (1.3 s)');
    expect(sessionLine(warned, 1, 1, true).split('\n')).toEqual([
      '[1/1] day1/van: ok  900 fixes, 7 flagged, 3 bridged; 2 warnings, calibration fallback (1.3 s)',
      '    fallback: calibration fell back to the profile values (only 120 s of fixes (needs 180 s))',
      '    warning row-skipped: day1/van.csv:12: time "x" is not ISO 8601',
      '    warning rows-sorted: 1 row(s) out of time order; rows sorted by time',
    ]);
  });
  it('IMU fallbacks are named and counted', () => {
    const imu: SessionSummary = { ...ok, info: { imu: { smootherFallbacks: 3, reviewConverged: false } } };
    expect(sessionLine(imu, 1, 1)).toBe('[1/1] day1/van: ok  900 fixes, 7 flagged, 3 bridged; 2 fallbacks (1.3 s)');
  });
  it('a failed session with kept outputs says they are stale', () => {
    const s: SessionSummary = { ...failed, stale: true, staleOutputs: ['bad.track.csv', 'bad.geojson'] };
    expect(sessionLine(s, 1, 1)).toBe('[1/1] bad: FAILED  bad.csv:1: empty file\n    the outputs of an earlier run are kept and now stale: bad.track.csv, bad.geojson');
  });
  it('the closing notes over the batch', () => {
    expect(batchNotes([ok], false)).toBe('');
    expect(batchNotes([warned, ok, { ...failed, stale: true }], false)).toBe(
      '2 warning(s) in 1 session(s): day1/van (summary.json; --verbose lists them)\n' +
        'fallbacks in 1 session(s): day1/van\n' +
        '1 failed session(s) keep the outputs of an earlier run, now stale: bad\n',
    );
  });
});
