import { defineConfig } from 'vite';

// The page: TypeScript modules under web/src, built into dist/web, the folder `flyclamp serve`
// serves. Plotly stays out of the bundle: the server hands it out from node_modules as
// /vendor/plotly.min.js and the page loads it as a classic script (a global).
export default defineConfig({
  root: 'web',
  base: '/',
  publicDir: false,
  logLevel: 'warn',
  build: {
    outDir: '../dist/web',
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: true,
    // One small bundle; no inline scripts (the server's Content-Security-Policy allows none).
    modulePreload: { polyfill: false },
    assetsInlineLimit: 0,
    chunkSizeWarningLimit: 400,
  },
});
