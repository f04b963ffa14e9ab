/**
 * The report PDF with names typed in Latin Extended, Cyrillic, Greek and
 * Vietnamese letters, built in this process by `writeReportPdf` (no
 * database) and read back with poppler's pdftotext / pdfinfo. poppler-utils
 * is one of the Debian packages `tests/setup/ensure-env.ts` installs; without
 * it these tests fail (execFileSync throws), they are never skipped.
 *
 * Every name here is invented. Letters by Unicode block (Unicode Standard,
 * code charts): Ż ł ó ć Ş ğ ü Ő Ŧ Đ Latin-1 Supplement / Latin Extended-A,
 * ợ Latin Extended Additional (Vietnamese), Р а з Ё Cyrillic, Ω Ξ Λ Γ Greek.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writeReportPdf } from '../../../server/reports/pdf';
import { CAUTION } from '../../../shared/measure/index';
import { REPORT_FORMAT, type BuildupReport, type ReportTitle } from '../../../shared/report/report';

const scratch = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-pdf-scripts-'));
afterAll(() => fs.rmSync(scratch, { recursive: true, force: true }));

const pdftotext = (f: string, ...args: string[]) => execFileSync('pdftotext', [...args, f, '-'], { encoding: 'utf8' });
const pdfinfo = (f: string) => execFileSync('pdfinfo', [f], { encoding: 'utf8' });
/** Runs of blanks as one space (pdftotext -layout pads table columns). */
const oneSpaced = (s: string) => s.replace(/[ \t]+/g, ' ');

const NAMES = {
  project: 'Разрез Ω-2',
  section: 'Ščęrbowa Ğüzel-7',
  line: 'ΓΡ-11 Ёлочная',
  survey: 'Őszi Ŧérkép Đợt 3',
  buildup: 'Kopiec Żółćwiński Холм Ωρα',
  interpreter: 'Ярослава Рифовна-Карбонатова',
  signedOffBy: 'Ξανθίππη Λιθοσκάφου',
} as const;

function reportWith(title: Partial<ReportTitle>): BuildupReport {
  return {
    format: REPORT_FORMAT,
    buildupId: 1,
    sectionId: 1,
    title: {
      project: 'Tessel Basin',
      section: 'TB-11',
      line: 'TB-11',
      survey: 'Tessel 2D',
      buildup: 'Kestrel Knoll',
      buildupVersion: 3,
      interpreter: null,
      reviewState: 'signed_off',
      reviewStateLabel: 'Signed off',
      signedOffBy: null,
      signedOffAt: '2026-11-30T10:00:00.000Z',
      signedOffVersion: 3,
      date: '2026-12-01T09:00:00.000Z',
      caylineVersion: '0.1.0',
      ...title,
    },
    unit: 'm',
    missing: ['Trace the base of the buildup.'],
    measurement: null,
    options: null,
    assumptions: ['Velocities from the default model.'],
    caution: CAUTION,
    velocity: { verticalDomain: 'twt_ms', description: 'Constant 2000 m/s.', isDefault: true, sources: [] },
    geometry: { base: [], cycles: [], terminations: [], topIsDrowningSurface: false },
    crop: null,
    notePins: [],
    lineEnds: null,
  };
}

describe('report PDF in several scripts', () => {
  it('prints project, section, line, survey, buildup, interpreter and reviewer names as typed, and keeps them in the metadata', async () => {
    const file = path.join(scratch, 'scripts.pdf');
    await writeReportPdf({ report: reportWith(NAMES), figures: [], paper: 'a4' }, file);

    const text = oneSpaced(pdftotext(file, '-layout'));
    expect(text).toContain(`Buildup report: ${NAMES.buildup}\n`);
    expect(text).toContain(`${NAMES.project} · ${NAMES.section}\n`);
    expect(text).toContain(`Project ${NAMES.project}\n`);
    expect(text).toContain(`Section ${NAMES.section}\n`);
    expect(text).toContain(`Line ${NAMES.line}\n`);
    expect(text).toContain(`Survey ${NAMES.survey}\n`);
    expect(text).toContain(`Buildup ${NAMES.buildup} (version 3)\n`);
    expect(text).toContain(`Interpreter ${NAMES.interpreter}\n`);
    expect(text).toContain(`Review state Signed off, by ${NAMES.signedOffBy} on 2026-11-30 (version 3)\n`);
    // the footer of every page
    expect(text).toContain(`${NAMES.buildup} · ${NAMES.section} Page 1 of 1`);
    // nothing spelled out or replaced
    expect(text).not.toContain('?');

    const info = pdfinfo(file);
    expect(info).toMatch(new RegExp(`^Title:\\s+Buildup report: ${NAMES.buildup}$`, 'm'));
    expect(info).toMatch(new RegExp(`^Subject:\\s+${NAMES.section} \\(${NAMES.line}, ${NAMES.survey}\\)$`, 'm'));
  }, 60_000);

  it('writes a character no subset has (CJK) as "?" and the rest of the name as typed', async () => {
    const file = path.join(scratch, 'cjk.pdf');
    await writeReportPdf({ report: reportWith({ buildup: 'Холм 礁 Ωρα' }), figures: [], paper: 'letter' }, file);
    expect(oneSpaced(pdftotext(file, '-layout'))).toContain('Buildup report: Холм ? Ωρα\n');
    // the metadata, UTF-16 in the PDF, keeps it
    expect(pdfinfo(file)).toMatch(/^Title:\s+Buildup report: Холм 礁 Ωρα$/m);
  }, 60_000);
});
