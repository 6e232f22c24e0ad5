import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { QueryClientProvider } from '@tanstack/react-query';
import { RouterProvider } from 'react-router-dom';
import '@fontsource/ibm-plex-sans/400.css';
import '@fontsource/ibm-plex-sans/400-italic.css';
import '@fontsource/ibm-plex-sans/500.css';
import '@fontsource/ibm-plex-sans/600.css';
import '@fontsource/ibm-plex-mono/400.css';
import '@fontsource/ibm-plex-mono/500.css';
import '@fontsource/merriweather/400.css';
import '@fontsource/merriweather/400-italic.css';
import '@fontsource/merriweather/700.css';
import './styles/app.css';
import { ToastProvider } from '@/components/ui/toast';
import { queryClient } from '@/lib/query-client';
import { router } from './app/router';

preloadShareImage();

const container = document.getElementById('root');
if (!container) throw new Error('index.html has no #root element.');

/**
 * A public story's page arrives with its cover still named in its share tags (the server writes
 * them into the HTML). The still is usually the largest thing the reader sees first, so it is
 * fetched now, alongside the page's code, instead of after the story's data; the cover <img> then
 * uses the same request. Same-origin path only, so the URL matches the one the page renders.
 */
function preloadShareImage() {
  const content = document.querySelector<HTMLMetaElement>('meta[property="og:image"]')?.content;
  if (!content) return;
  const image = new URL(content, window.location.href);
  const link = document.createElement('link');
  link.rel = 'preload';
  link.as = 'image';
  link.href = new URL(image.pathname + image.search, window.location.origin).href;
  document.head.append(link);
}

createRoot(container).render(
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <ToastProvider>
        <RouterProvider router={router} />
      </ToastProvider>
    </QueryClientProvider>
  </StrictMode>,
);
