import { defineConfig } from 'vite';

// Relative asset paths: the built page is served from any folder by `edgewise view`.
export default defineConfig({
  base: './',
  build: { outDir: 'dist', emptyOutDir: true, target: 'es2022', chunkSizeWarningLimit: 2000 },
  worker: { format: 'es' },
});
