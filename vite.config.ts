import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

const apiTarget = `http://127.0.0.1:${process.env.PORT ?? '3000'}`;

export default defineConfig({
  plugins: [react(), tailwindcss()],
  resolve: {
    alias: {
      '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
      '@': fileURLToPath(new URL('./src', import.meta.url)),
    },
  },
  // The manifest lets tests/browser/first-load.browser.test.ts follow each route's static imports.
  build: { outDir: 'dist/client', emptyOutDir: true, sourcemap: true, manifest: true },
  server: {
    host: '127.0.0.1',
    port: Number(process.env.VITE_PORT ?? 5173),
    strictPort: true,
    proxy: {
      '/api': apiTarget,
      '/auth': apiTarget,
      '/media': apiTarget,
      '/feeds': apiTarget,
    },
  },
});
