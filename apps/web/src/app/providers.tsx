import { QueryClientProvider } from '@tanstack/react-query';
import { useState } from 'react';
import { createBrowserRouter, RouterProvider } from 'react-router-dom';
import { createQueryClient } from '@/app/query-client';
import { createRoutes } from '@/app/router';

export function AppProviders() {
  const [queryClient] = useState(createQueryClient);
  const [router] = useState(() => createBrowserRouter(createRoutes(queryClient)));
  return (
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  );
}
