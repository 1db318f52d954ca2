import { fileURLToPath, URL } from 'node:url'
import { defineConfig } from 'vitest/config'
import vue from '@vitejs/plugin-vue'
import Components from 'unplugin-vue-components/vite'
import { ElementPlusResolver } from 'unplugin-vue-components/resolvers'
import { compression } from 'vite-plugin-compression2'
import { routeBundles } from './build/route-bundles.ts'
import { RUN_PATH, SIGN_IN_PATH } from './client/router/paths.ts'

const apiPort = Number(process.env.API_PORT ?? 3001)
const bundles = routeBundles(fileURLToPath(new URL('.', import.meta.url)), [
  { name: 'sign-in', roots: ['client/views/SignInView.vue'], paths: [SIGN_IN_PATH] },
  { name: 'runner', roots: ['client/views/RunView.vue', 'client/components/AppShell.vue'], paths: [RUN_PATH] },
])

export default defineConfig({
  plugins: [
    vue(),
    bundles.plugin,
    Components({
      dirs: ['client/components'],
      dts: 'client/components.d.ts',
      resolvers: [ElementPlusResolver({ importStyle: 'css' })],
    }),
    // Brotli (quality 11) and gzip (level 9) copies beside every text file, served by server/middleware/client-assets.ts
    // by Accept-Encoding: compressed once at build, not on every request. A copy that would not be smaller is not written.
    compression({ algorithms: ['brotliCompress', 'gzip'], include: /\.(html|css|js|mjs|json|svg|txt)$/, exclude: /\.vite\//, logLevel: 'silent' }),
  ],
  resolve: {
    alias: {
      '@': fileURLToPath(new URL('./client', import.meta.url)),
      '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
    },
  },
  // The manifest lists each chunk's static imports: bench/client.bench.ts follows it to weigh a cold load per route.
  // One stylesheet for the whole client: on a slow link each extra file costs a round trip, and the styles of every
  // page together are smaller (brotli) than the round trips of the twenty small sheets a run step asked for.
  build: {
    outDir: 'dist/client',
    emptyOutDir: true,
    chunkSizeWarningLimit: 1200,
    manifest: true,
    cssCodeSplit: false,
    // One file per page on a cold load for the two pages a tablet opens on weak signal (build/route-bundles.ts).
    rolldownOptions: { output: { codeSplitting: { groups: bundles.groups } } },
  },
  server: {
    port: 5173,
    proxy: { '/api': { target: `http://127.0.0.1:${apiPort}`, changeOrigin: false } },
  },
  test: {
    // Two test files at a time (the machine this runs on has two cores); every server-test worker has a PostgreSQL
    // cluster of its own (tests/setup/postgres.ts). `--maxWorkers=1` runs everything one file at a time.
    maxWorkers: 2,
    projects: [
      {
        extends: true,
        test: { name: 'shared', include: ['tests/shared/**/*.test.ts'], environment: 'node' },
      },
      {
        extends: true,
        test: {
          name: 'server',
          include: ['tests/server/**/*.test.ts', 'tests/e2e/**/*.test.ts'],
          environment: 'node',
          // The client build starts first and runs in the background; the browser tests wait for it.
          globalSetup: ['tests/setup/client.ts', 'tests/setup/browser.ts', 'tests/setup/postgres.ts'],
          setupFiles: ['tests/setup/server-env.ts'],
          testTimeout: 20000,
          hookTimeout: 60000,
        },
      },
      {
        extends: true,
        test: { name: 'client', include: ['tests/client/**/*.test.ts'], environment: 'jsdom' },
      },
    ],
  },
})
