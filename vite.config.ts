import { defineConfig } from 'vitest/config';
import vue from '@vitejs/plugin-vue';

const apiPort = Number(process.env.PORT ?? 8080);

export default defineConfig({
  plugins: [vue()],
  root: '.',
  build: { outDir: 'dist/client', emptyOutDir: true, chunkSizeWarningLimit: 2000 },
  server: {
    port: Number(process.env.VITE_PORT ?? 5173),
    proxy: { '/api': { target: `http://127.0.0.1:${apiPort}`, changeOrigin: false } },
  },
  test: {
    projects: [
      {
        extends: true,
        test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node' },
      },
      {
        extends: true,
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          globalSetup: ['tests/helpers/db-global-setup.ts'],
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 120_000,
          // expect.poll waits up to 10 s (vitest's 1 s is too short while the api and e2e projects share two cores)
          expect: { poll: { timeout: 10_000 } },
        },
      },
      {
        extends: true,
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          globalSetup: ['tests/helpers/build-client.ts', 'tests/helpers/db-global-setup.ts'],
          fileParallelism: false,
          testTimeout: 180_000,
          hookTimeout: 300_000,
          expect: { poll: { timeout: 10_000 } },
        },
      },
    ],
  },
});
