/**
 * Canvas benchmark: frames per second while panning the interpretation
 * canvas with 10 cycles × 2,000 vertices over a 20,000 × 6,000 px section.
 *
 *   npx tsx tests/bench/canvas.bench.ts [--seconds=6] [--skip-build] [--shots]
 *
 * Setup (all real): a throwaway PostgreSQL cluster in a temp folder, the
 * Cayline server booted on it (server/index.ts, demo accounts seeded), a
 * generated 20,000 × 6,000 JPEG uploaded through the API and tiled by the
 * server's own pyramid job, a calibration, and one buildup whose geometry
 * (a 2,000-vertex base, 10 cycle tops of 2,000 vertices, 20 flanks, Margin
 * pins, stamps) is saved through the API.
 *
 * Page measured in headless Debian Chromium (playwright-core): the app's
 * interpretation canvas, /sections/:id/interpret (built with `vite build`
 * and served by the Cayline server), with the buildup loaded into the
 * Ledger, live Readings and autosave running as a person would have them.
 *
 * A scripted pan (left-button drags across the stage, both directions)
 * runs while the page counts requestAnimationFrame callbacks. Printed:
 * fps, the ratio to the rAF rate of an empty page in the same browser (the
 * ceiling), and the slowest frame. Never fails on time.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import sharp from 'sharp';
import { chromium, type Page } from 'playwright-core';
import { ROOT_DIR } from '../../server/config';
import { DEMO_PASSWORD, seedDemoUsers } from '../../server/db/seeders/demo';
import { boot } from '../../server/index';
import { benchDatabase } from './bench-db';

const W = 20000;
const H = 6000;
const CYCLES = 10;
const VERTS = 2000;
/** Pointer moves per drag (20 px each). */
const STEPS = 30;

const args = new Map(
  process.argv.slice(2).map((a) => {
    const [k, v] = a.replace(/^--/, '').split('=');
    return [k, v ?? '1'] as const;
  }),
);
const SECONDS = Number(args.get('seconds') ?? 6);
const SKIP_BUILD = args.has('skip-build');

const log = (m: string) => console.log(`[canvas.bench] ${m}`);

// ---------------------------------------------------------------------------
// data

/**
 * A synthetic greyscale section: layered reflectors draped over a mound with
 * a slow amplitude change along the line (no per-pixel noise, which would
 * only make the file big without changing the tiles' decode cost much).
 */
async function makeSectionJpeg(): Promise<Buffer> {
  const px = Buffer.alloc(W * H);
  for (let u = 0; u < W; u++) {
    const mound = 900 * Math.exp(-(((u - W / 2) / 3500) ** 2));
    const amp = 70 + 40 * Math.sin(u / 1300);
    for (let v = 0; v < H; v++) {
      const d = v + (v > 1500 ? mound * Math.min(1, (v - 1500) / 1200) : 0);
      const g = 128 + amp * Math.sin((2 * Math.PI * d) / 40) * (0.6 + 0.4 * Math.sin(d / 300));
      px[v * W + u] = g < 0 ? 0 : g > 255 ? 255 : g;
    }
  }
  return sharp(px, { raw: { width: W, height: H, channels: 1 } }).jpeg({ quality: 80 }).toBuffer();
}

type P = [number, number];
const round = (n: number) => Math.round(n * 100) / 100;

/** Base + 10 backstepping cycles, each top 2,000 vertices with a little relief. */
function makeGeometry() {
  const line = (u0: number, u1: number, n: number, v: (u: number) => number): P[] =>
    Array.from({ length: n }, (_, i) => {
      const u = u0 + ((u1 - u0) * i) / (n - 1);
      return [round(u), round(v(u))];
    });
  const base = line(2000, 18000, VERTS, (u) => 4600 + 30 * Math.sin(u / 700));
  const cycles = Array.from({ length: CYCLES }, (_, i) => {
    const half = 7000 - i * 550;
    const crest = 4300 - i * 250;
    const u0 = W / 2 - half;
    const u1 = W / 2 + half;
    const top = line(u0, u1, VERTS, (u) => crest + 180 * ((u - W / 2) / half) ** 2 + 12 * Math.sin(u / 90));
    const mL = top[Math.round(VERTS * 0.12)];
    const mR = top[Math.round(VERTS * 0.88)];
    return {
      index: i + 1,
      top,
      marginLeft: mL,
      marginRight: mR,
      flankLeft: line(mL[0], mL[0] - 900, 40, (u) => mL[1] + (mL[0] - u) * 0.35),
      flankRight: line(mR[0], mR[0] + 900, 40, (u) => mR[1] + (u - mR[0]) * 0.35),
    };
  });
  const terminations = Array.from({ length: 12 }, (_, i) => ({
    type: (['onlap', 'downlap', 'toplap', 'truncation'] as const)[i % 4],
    at: [round(3000 + i * 1200), round(3500 + (i % 3) * 200)] as P,
  }));
  return { base, cycles, terminations, topIsDrowningSurface: true };
}

// ---------------------------------------------------------------------------
// server

async function api<T>(base: string, token: string | null, method: string, p: string, body?: unknown): Promise<T> {
  const r = await fetch(`${base}/api${p}`, {
    method,
    headers: { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...(body !== undefined ? { 'Content-Type': 'application/json' } : {}) },
    body: body !== undefined ? JSON.stringify(body) : undefined,
  });
  const text = await r.text();
  if (!r.ok) throw new Error(`${method} ${p} → ${r.status} ${text.slice(0, 300)}`);
  return (text ? JSON.parse(text) : null) as T;
}

// ---------------------------------------------------------------------------
// measuring

const RAF_COUNTER = `
  window.__bench = { frames: 0, maxGap: 0, last: 0, running: false, draws: [], drawMs: 0 };
  (() => {
    // Konva puts itself on window; time every layer draw (tiles and overlays alike).
    const K = window.Konva;
    if (K && !K.__benchWrapped) {
      K.__benchWrapped = true;
      const orig = K.Layer.prototype.drawScene;
      K.Layer.prototype.drawScene = function (...a) {
        const t = performance.now();
        try { return orig.apply(this, a); } finally { window.__bench.drawMs += performance.now() - t; }
      };
    }
  })();
  window.__benchStart = () => {
    const b = window.__bench; b.frames = 0; b.maxGap = 0; b.draws = []; b.drawMs = 0; b.last = performance.now(); b.t0 = b.last; b.running = true;
    const tick = (t) => {
      if (!b.running) return;
      b.frames++; b.maxGap = Math.max(b.maxGap, t - b.last); b.last = t;
      if (b.drawMs > 0) b.draws.push(b.drawMs);
      b.drawMs = 0;
      requestAnimationFrame(tick);
    };
    requestAnimationFrame(tick);
  };
  window.__benchStop = () => {
    const b = window.__bench; b.running = false;
    const d = b.draws.slice().sort((x, y) => x - y);
    const mean = d.length ? d.reduce((s, x) => s + x, 0) / d.length : 0;
    return { frames: b.frames, ms: performance.now() - b.t0, maxGap: b.maxGap, drawFrames: d.length, drawMean: mean, drawP95: d.length ? d[Math.floor(d.length * 0.95)] : 0 };
  };
`;

interface Run {
  fps: number;
  maxFrameMs: number;
  drags: number;
  /** Pointer moves the page handled per second (each waits for the page to take it). */
  stepsPerS: number;
  /** Frames in which Konva drew, and the time its layer draws took in them. */
  drawFrames: number;
  drawMeanMs: number;
  drawP95Ms: number;
}

async function measure(page: Page, pan: boolean): Promise<Run> {
  await page.evaluate(RAF_COUNTER);
  const box = await page.locator('[data-test="section-stage"]').boundingBox().catch(() => null);
  const vw = page.viewportSize()!;
  const b = box ?? { x: 0, y: 0, width: vw.width, height: vw.height };
  const cx = b.x + b.width / 2;
  const cy = b.y + b.height / 2;
  await page.evaluate('window.__benchStart()');
  log(`  measuring ${pan ? 'a scripted pan' : 'an idle page'} for ${SECONDS} s…`);
  const end = Date.now() + SECONDS * 1000;
  let drags = 0;
  while (Date.now() < end) {
    if (pan) {
      const dir = drags % 2 === 0 ? 1 : -1;
      await page.mouse.move(cx - dir * 300, cy - dir * 60);
      await page.mouse.down();
      for (let i = 1; i <= STEPS; i++) await page.mouse.move(cx - dir * 300 + dir * 20 * i, cy - dir * 60 + dir * 4 * i);
      await page.mouse.up();
      drags++;
    } else {
      await page.waitForTimeout(200);
    }
  }
  const r = (await page.evaluate('window.__benchStop()')) as { frames: number; ms: number; maxGap: number; drawFrames: number; drawMean: number; drawP95: number };
  return {
    fps: (r.frames * 1000) / r.ms,
    maxFrameMs: r.maxGap,
    drags,
    stepsPerS: (drags * STEPS * 1000) / r.ms,
    drawFrames: r.drawFrames,
    drawMeanMs: r.drawMean,
    drawP95Ms: r.drawP95,
  };
}

/** Screenshots of the tools at work (for a person to look at): --shots. */
async function toolShots(page: Page): Promise<void> {
  const shot = (n: string) => page.screenshot({ path: path.join(os.tmpdir(), `cayline-canvas-${n}.png`) });
  await page.locator('[data-test="stage-fit"]').click();
  await page.waitForTimeout(400);
  const box = (await page.locator('[data-test="section-stage"]').boundingBox())!;
  const at = (fx: number, fy: number) => [box.x + box.width * fx, box.y + box.height * fy] as const;
  await shot('0-fit');
  // Select a cycle top near the crest, then zoom in around it.
  const [sx, sy] = at(0.5, 0.4505);
  await page.mouse.move(sx, sy);
  await page.mouse.click(sx, sy);
  await shot('1-selected');
  for (let i = 0; i < 6; i++) await page.mouse.wheel(0, -120);
  await page.waitForTimeout(800);
  await shot('2-selected-zoomed');
  // Ruler.
  await page.keyboard.press('u');
  await page.mouse.click(...at(0.3, 0.3));
  await page.mouse.move(...at(0.6, 0.55));
  await page.mouse.click(...at(0.6, 0.55));
  await shot('3-ruler');
  // Trace: three clicks and a rubber band.
  await page.keyboard.press('Escape');
  await page.keyboard.press('l');
  await page.keyboard.press('3');
  await page.mouse.click(...at(0.35, 0.3));
  await page.mouse.click(...at(0.3, 0.45));
  await page.mouse.click(...at(0.27, 0.6));
  await page.mouse.move(...at(0.2, 0.7));
  await shot('4-trace');
  await page.keyboard.press('Escape');
  await page.keyboard.press('j');
  await page.mouse.move(...at(0.45, 0.5));
  await shot('5-stamp');
  await page.keyboard.press('?');
  await shot('6-help');
  await page.keyboard.press('Escape');
  log(`tool screenshots in ${os.tmpdir()}/cayline-canvas-*.png`);
}

async function waitForStage(page: Page): Promise<void> {
  await page.waitForSelector('[data-test="section-stage"] canvas', { timeout: 60_000 });
  // Let the first tiles arrive so the pan measures steady work, not the first download.
  await page.waitForFunction(() => {
    const el = document.querySelector('[data-test="section-stage"]') as HTMLElement | null;
    return !!el && el.dataset.tilesPending === '0' && Number(el.dataset.tilesDrawn ?? 0) > 0;
  }, undefined, { timeout: 30_000 }).catch(async () => {
    const ds = await page.evaluate(() => JSON.stringify((document.querySelector('[data-test="section-stage"]') as HTMLElement | null)?.dataset ?? {}));
    log(`tiles did not settle within 30 s (${ds}); measuring anyway`);
  });
}

// ---------------------------------------------------------------------------

let interrupted: (() => Promise<void>) | null = null;
for (const sig of ['SIGINT', 'SIGTERM'] as const)
  process.once(sig, () => {
    log(`${sig}: cleaning up`);
    void (interrupted ?? (async () => {}))().finally(() => process.exit(130));
  });

async function main(): Promise<void> {
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-canvas-bench-'));
  fs.chmodSync(tmp, 0o755);
  const cleanups: (() => Promise<void> | void)[] = [() => fs.rmSync(tmp, { recursive: true, force: true })];
  const cleanUp = async () => {
    for (const fn of cleanups.splice(0).reverse()) {
      try {
        await fn();
      } catch (e) {
        log(`cleanup: ${e instanceof Error ? e.message : e}`);
      }
    }
  };
  interrupted = cleanUp;
  try {
    // 1. build
    if (!SKIP_BUILD) {
      log('building the client (vite build)…');
      const r = spawnSync(path.join(ROOT_DIR, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: ROOT_DIR, stdio: 'inherit' });
      if (r.status !== 0) throw new Error('vite build failed');
    }

    // 2. database and server
    const { databaseUrl, config } = await benchDatabase(tmp, cleanups);
    let projectId: number | null = null;
    const running = await boot({
      databaseUrl,
      listen: true,
      config,
      afterMigrate: async ({ sequelize }) => {
        projectId = (await seedDemoUsers(sequelize)).projectId;
      },
    });
    cleanups.push(() => running.close());
    const base = running.url;
    log(`server at ${base}`);

    // 3. section, calibration, buildup
    const login = await api<{ token: string; user: unknown; expiresAt?: string }>(base, null, 'POST', '/auth/login', { email: 'interpreter@tessel.example', password: DEMO_PASSWORD });
    const token = login.token;
    if (!projectId) throw new Error('the demo project was not seeded');
    log(`generating a ${W} × ${H} section…`);
    const jpeg = await makeSectionJpeg();
    const form = new FormData();
    for (const [k, v] of Object.entries({ title: 'TB-11 bench', lineName: 'TB-11', survey: 'TB-2024', verticalDomain: 'twt_ms' })) form.append(k, v);
    form.append('image', new Blob([new Uint8Array(jpeg)], { type: 'image/jpeg' }), 'tb11-bench.jpg');
    const up = await fetch(`${base}/api/projects/${projectId}/sections`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
    if (up.status !== 202 && up.status !== 201) throw new Error(`upload → ${up.status} ${await up.text()}`);
    const sectionId = ((await up.json()) as { id: number }).id;
    log(`section ${sectionId} uploaded (${(jpeg.length / 1e6).toFixed(1)} MB); waiting for the tile pyramid…`);
    const t0 = Date.now();
    for (;;) {
      const s = await api<{ status: string; progress: number; failureReason: string | null }>(base, token, 'GET', `/sections/${sectionId}`);
      if (s.status === 'ready') break;
      if (s.status === 'failed') throw new Error(`tiling failed: ${s.failureReason}`);
      if (Date.now() - t0 > 10 * 60_000) throw new Error('tiling took more than 10 minutes');
      await new Promise((r) => setTimeout(r, 1000));
    }
    log(`tiles ready in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    await api(base, token, 'PUT', `/sections/${sectionId}/calibration`, {
      ties: [
        { px: [0, 0], world: [0, 0] },
        { px: [W, 0], world: [250000, 0] },
        { px: [0, H], world: [0, 3000] },
      ],
    });
    const created = await api<{ id: number; version: number }>(base, token, 'POST', `/sections/${sectionId}/buildups`, { name: 'Kestrel Knoll' });
    await api(base, token, 'PUT', `/buildups/${created.id}`, { version: created.version, geometry: makeGeometry() });
    log(`buildup saved: ${CYCLES} cycles × ${VERTS} vertices + base`);

    // 4. browser
    const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-bench-chromium-'));
    cleanups.push(() => fs.rmSync(profile, { recursive: true, force: true }));
    const ctx = await chromium.launchPersistentContext(profile, {
      executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
      headless: true,
      viewport: { width: 1440, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    cleanups.push(() => ctx.close());
    const page = ctx.pages()[0] ?? (await ctx.newPage());
    page.setDefaultTimeout(60_000);
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(String(e)));
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    const imageStatus = new Map<number, number>();
    page.on('response', (r) => {
      if (/\/(tiles|preview)\b/.test(r.url())) imageStatus.set(r.status(), (imageStatus.get(r.status()) ?? 0) + 1);
    });

    await page.setContent('<!doctype html><html><body style="margin:0;background:#1d232a"></body></html>');
    const empty = await measure(page, false);
    log(`empty page: ${empty.fps.toFixed(1)} rAF/s`);

    const results: { name: string; run: Run }[] = [];
    await page.addInitScript(
      ([t, u]) => localStorage.setItem('cayline.session', JSON.stringify({ token: t, expiresAt: null, user: u })),
      [token, login.user] as const,
    );
    await page.goto(`${base}/sections/${sectionId}/interpret`);
    await waitForStage(page);
    await page.waitForFunction(() => document.querySelectorAll('[data-test="ledger-cycle-row"]').length > 0, undefined, { timeout: 60_000 });
    const cycles = await page.locator('[data-test="ledger-cycle-row"]').count();
    log(`interpret page loaded: ${cycles} cycles in the Ledger`);
    results.push({ name: 'interpret page idle', run: await measure(page, false) });
    results.push({ name: 'interpret page, pan', run: await measure(page, true) });
    await page.screenshot({ path: path.join(os.tmpdir(), 'cayline-canvas-bench.png') });
    if (args.has('shots')) await toolShots(page);

    console.log('');
    console.log(`Canvas pan benchmark — ${W} × ${H} px section, ${CYCLES} cycles × ${VERTS} vertices, ${SECONDS} s per run, headless Chromium --disable-gpu`);
    console.log(`  empty page rAF rate (ceiling): ${empty.fps.toFixed(1)} fps`);
    for (const { name, run } of results)
      console.log(
        `  ${name.padEnd(28)} ${run.fps.toFixed(1).padStart(5)} fps (ratio to empty page ${(run.fps / empty.fps).toFixed(2)})   slowest frame ${run.maxFrameMs.toFixed(0)} ms   ` +
          `pan steps ${run.stepsPerS.toFixed(1)}/s   Konva draw per frame mean ${run.drawMeanMs.toFixed(1)} ms, p95 ${run.drawP95Ms.toFixed(1)} ms (${run.drawFrames} frames)`,
      );
    const idle = results.find((r) => r.name === 'interpret page idle')?.run;
    const pan = results.find((r) => r.name === 'interpret page, pan')?.run;
    if (idle && pan) console.log(`  pan / idle page: fps ${(pan.fps / idle.fps).toFixed(2)}`);
    console.log(`  image responses by status: ${JSON.stringify(Object.fromEntries(imageStatus))}`);
    if (errors.length) console.log(`  page errors:\n    ${errors.join('\n    ')}`);
  } finally {
    await cleanUp();
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e);
    process.exit(1);
  },
);
