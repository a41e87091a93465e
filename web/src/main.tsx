import '@fontsource/work-sans/400.css';
import '@fontsource/work-sans/500.css';
import '@fontsource/work-sans/600.css';
import '@fontsource/work-sans/700.css';
import './styles.css';
import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { QueryClientProvider } from '@tanstack/react-query';
// the DOM build of the provider: it can commit a navigation at once when asked (flushSync, see useSignOut)
import { RouterProvider } from 'react-router/dom';
import { createQueryClient, setSignedOutHandler } from './api/queryClient.js';
import { keys } from './api/queries.js';
import { createRouter } from './routes.js';
import { signInPathFor } from './auth/nextPath.js';

const queryClient = createQueryClient();
const router = createRouter();

// A session that ends mid-visit (expired, revoked, signed out elsewhere) sends the person to sign in.
setSignedOutHandler(() => {
  queryClient.setQueryData(keys.me, null);
  const here = router.state.location;
  if (here.pathname !== '/sign-in') void router.navigate(signInPathFor(here), { replace: true });
});

createRoot(document.getElementById('root')!).render(
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  </StrictMode>,
);
