import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

// The client is served by the API process in production (`npm start`, from dist/); in `npm run dev`
// Vite serves it and forwards /api to the API on port 4400.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: {
    outDir: 'dist',
    emptyOutDir: true,
    // Fonts and images as files, never data: URIs, so the CSP can stay at 'self'.
    assetsInlineLimit: 0,
  },
  server: {
    proxy: { '/api': { target: `http://127.0.0.1:${process.env.PORT ?? 4400}`, changeOrigin: false } },
  },
});
