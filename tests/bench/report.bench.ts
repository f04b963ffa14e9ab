/**
 * Report benchmark: the Kestrel Knoll report PDF (with its crop PNG/SVG) as
 * the report job makes it (server/reports/render.ts: crop composited from
 * the tile pyramid, overlay, ECharts SVG plots, pdfkit), as a ratio to one
 * sharp decode of the section's preview (`preview.jpg`, fits 2048 px), the
 * floor any crop of the section pays. Goal: ratio ≤ 3. The measurement is
 * warm (cached, as after the report page was opened); the queue's pick-up
 * latency is printed separately and not counted. Last, for the record, the
 * five plots alone (ECharts SSR, then svg-to-pdfkit) against the same decode.
 *
 * Setup (all real): a throwaway PostgreSQL cluster, the server booted on it,
 * the invented demo sections TB-11 and TB-14 seeded at full size and tiled,
 * Kestrel Knoll traced on TB-11 from the generator's geometry.
 *
 *   npx tsx tests/bench/report.bench.ts
 */
import fs from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import { seedDemoUsers } from '../../server/db/seeders/demo';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { seedDemoInterpretation } from '../../server/db/seeders/interpretations';
import { boot } from '../../server/index';
import { ctx } from '../../server/context';
import { Section } from '../../server/models/section';
import { Buildup } from '../../server/models/buildup';
import { User } from '../../server/models/index';
import { BuildupReportRow } from '../../server/models/report';
import { fileStoreFor } from '../../server/storage/fileStore';
import { sectionKeys } from '../../server/storage/keys';
import { measureBuildup } from '../../server/services/buildup.service';
import { requestReport } from '../../server/services/report.service';
import { renderReportFiles } from '../../server/reports/render';
import { plotSvg } from '../../server/reports/pdf';
import { reportPlots } from '../../shared/report/plots';
import { PAPERS } from '../../shared/report/report';
import PDFDocument from 'pdfkit';
import SVGtoPDF from 'svg-to-pdfkit';
import { DEMO_SECTIONS, sectionGeometry } from '../../server/synth/demo';
import type { BuildupGeometry } from '../../shared/editor/model';
import { benchDatabase, benchTmp } from './bench-db';
import { median } from './stats';

const RUNS = 6;
const log = (s: string) => console.log(s);

async function main() {
  const tmp = benchTmp('report');
  const cleanups: (() => Promise<void> | void)[] = [];
  try {
    const { databaseUrl, storageDir, config } = await benchDatabase(tmp, cleanups);
    const running = await boot({
      databaseUrl,
      listen: false,
      config,
      afterMigrate: async ({ sequelize }) => {
        await seedDemoUsers(sequelize);
      },
    });
    cleanups.push(() => running.close());
    const deps = { sequelize: ctx().sequelize, config: running.config, log: () => {} };
    const t0 = performance.now();
    await seedDemoSections(deps);
    for (;;) {
      const rows = await Section.findAll();
      if (rows.every((s) => s.status === 'ready')) break;
      if (rows.some((s) => s.status === 'failed')) throw new Error('a demo section failed to tile');
      await new Promise((r) => setTimeout(r, 250));
    }
    await seedDemoInterpretation(deps);
    log(`demo sections seeded and tiled in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

    const def = DEMO_SECTIONS.find((d) => d.lineName === 'TB-11')!;
    const section = (await Section.findOne({ where: { lineName: 'TB-11' } }))!;
    const interpreter = (await User.findOne({ where: { email: 'interpreter@tessel.example' } }))!;
    const g = sectionGeometry(def, { width: section.width, height: section.height }).pixelGeometry.buildups[0] as unknown as BuildupGeometry & { name: string };
    const buildup = await Buildup.create({
      sectionId: section.id,
      name: 'Kestrel Knoll',
      geometry: { base: g.base, cycles: g.cycles.map((cy) => ({ ...cy, systemsTract: null })), terminations: g.terminations, topIsDrowningSurface: g.topIsDrowningSurface },
      createdById: interpreter.id,
      updatedById: interpreter.id,
    });
    const actor = { id: interpreter.id, role: 'interpreter' };
    const tm = performance.now();
    await measureBuildup(actor, buildup.id); // warm, as after the page was opened
    log(`section ${section.width} × ${section.height} px; measurement (1000 draws, cached afterwards) ${(performance.now() - tm).toFixed(0)} ms`);

    const store = fileStoreFor(storageDir);
    const preview = path.join(storageDir, sectionKeys(section.storageKey).pyramid, 'preview.jpg');
    const decodeOnce = async () => {
      const s = performance.now();
      await sharp(preview).raw().toBuffer();
      return performance.now() - s;
    };
    await decodeOnce(); // warm libvips
    // pairs measured back to back (a decode, then a render), so a busy machine slows both sides of each ratio alike
    const decode: number[] = [];
    const render: number[] = [];
    const ratios: number[] = [];
    let last = { pdfBytes: 0, pages: 0 };
    for (let i = 0; i < RUNS; i++) {
      const d = median([await decodeOnce(), await decodeOnce(), await decodeOnce()]);
      const out = fs.mkdtempSync(path.join(tmp, 'render-'));
      const row = BuildupReportRow.build({ buildupId: buildup.id, cacheKey: 'bench', paper: 'a4', unit: 'm', stretch: 1, status: 'running', requestedById: interpreter.id });
      const s = performance.now();
      last = await renderReportFiles({ buildup, section, row, store, outDir: out });
      const r = performance.now() - s;
      decode.push(d);
      render.push(r);
      if (i > 0) ratios.push(r / d); // the first render starts the PDF thread (tsx, pdfkit, ECharts), as the first report after a restart does
    }

    // end to end through the queue (pick-up latency included), for information
    const e0 = performance.now();
    const asked = await requestReport(actor, buildup.id, { paper: 'letter' });
    for (;;) {
      const r = (await BuildupReportRow.findByPk(asked.id))!;
      if (r.status === 'ready' || r.status === 'failed') break;
      await new Promise((res) => setTimeout(res, 50));
    }
    const e2e = performance.now() - e0;

    log(`preview decode (sharp, ${(await sharp(preview).metadata()).width} px wide): median ${median(decode).toFixed(1)} ms`);
    log(`report render (crop ×2, overlay, 5 plots, ${last.pages}-page PDF of ${(last.pdfBytes / 1024).toFixed(0)} KiB): ${render.map((x) => x.toFixed(0)).join(', ')} ms (the first one starts the PDF thread)`);
    log(`ratio report ÷ preview decode, warm thread: median ${median(ratios).toFixed(1)} of ${ratios.map((x) => x.toFixed(1)).join(', ')} (goal ≤ 3)`);
    log(`through the job queue, request to ready: ${e2e.toFixed(0)} ms`);

    // for the record, the plots' share, which the report must pay as the issue asks for it (ECharts' own
    // server-side rendering, vectors through svg-to-pdfkit), each against the same decode, here on a quiet thread
    const m = (await measureBuildup(actor, buildup.id)).buildups[0];
    const plotW = Math.floor((PAPERS.a4.width - 2 * 48 - 12) / 2);
    const plotsOnce = () => {
      const s = performance.now();
      const svgs = reportPlots(m, 'm', 10).map((p) => plotSvg(p.option, plotW, 170));
      return { ms: performance.now() - s, svgs };
    };
    const drawOnce = (svgs: string[]) => {
      const doc = new PDFDocument({ size: 'A4' });
      doc.on('data', () => {});
      const s = performance.now();
      for (const svg of svgs) SVGtoPDF(doc, svg, 48, 48, { width: plotW, height: 170 });
      const ms = performance.now() - s;
      doc.end();
      return ms;
    };
    for (let i = 0; i < 5; i++) drawOnce(plotsOnce().svgs); // warm
    const dq: number[] = [];
    const pq: number[] = [];
    const sq: number[] = [];
    for (let i = 0; i < 15; i++) {
      dq.push(await decodeOnce());
      const r = plotsOnce();
      pq.push(r.ms);
      sq.push(drawOnce(r.svgs));
    }
    log(`the plots alone (quiet thread): ECharts SSR of the ${reportPlots(m, 'm', 10).length} plots median ${median(pq).toFixed(1)} ms (×${(median(pq) / median(dq)).toFixed(1)} of a decode), svg-to-pdfkit of their SVGs ${median(sq).toFixed(1)} ms (×${(median(sq) / median(dq)).toFixed(1)})`);
  } finally {
    for (const f of cleanups.reverse()) await f();
    fs.rmSync(tmp, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
