/**
 * The notes of a decisions file (src/input/decision-notes.ts): fix index → note for the rows whose
 * time names a fix, whatever the column order, delimiter or quoting; empty notes, unmatched times
 * and files without a note column give nothing (the decisions reader reports bad rows).
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { parseDecisionNotes } from '../../src/input/decision-notes.js';

const log = ['time,lat,lon', '2026-05-13T09:30:00Z,52.5,13.4', '2026-05-13T09:30:01Z,52.5001,13.4', '2026-05-13T09:30:02Z,52.5002,13.4'].join('\n') + '\n';
const series = readFixCsv(log, 'n.csv', loadConfig());

describe('parseDecisionNotes', () => {
  test.each([
    { name: 'comma, quoted note with a comma', text: 'time,decision,note\n2026-05-13T09:30:01.000Z,reject,"reflection, near the wall"\n', notes: [[1, 'reflection, near the wall']] },
    { name: 'semicolons, other column order, BOM', text: '\uFEFFnote;time;decision\nok here;2026-05-13T09:30:02.000Z;keep\n', notes: [[2, 'ok here']] },
    { name: 'empty note and a time without a fix left out', text: 'time,decision,note\n2026-05-13T09:30:00.000Z,keep,\n2026-05-13T10:00:00.000Z,keep,x\n', notes: [] },
    { name: 'no note column', text: 'time,decision\n2026-05-13T09:30:00.000Z,keep\n', notes: [] },
  ])('$name', ({ text, notes }) => {
    expect([...parseDecisionNotes(text, series)]).toEqual(notes);
  });
});
