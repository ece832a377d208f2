import { defineConfig } from 'vite';
import { fileURLToPath } from 'node:url';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

const gateway = 'http://127.0.0.1:8480';

// The gateway serves dist/ in production and falls back to index.html for client routes.
export default defineConfig({
  base: '/',
  resolve: { alias: { '@': fileURLToPath(new URL('./src', import.meta.url)) } },
  plugins: [react(), tailwindcss()],
  server: {
    host: '127.0.0.1',
    proxy: { '/api': gateway, '/healthz': gateway, '/readyz': gateway },
  },
  build: {
    outDir: 'dist',
    emptyOutDir: true,
    // No data: URIs, so the CSP can stay at font-src/img-src 'self'.
    assetsInlineLimit: 0,
    // The preload polyfill is not needed by the browsers we support; keeps script-src 'self' simple.
    modulePreload: { polyfill: false },
    chunkSizeWarningLimit: 900,
  },
});
