import {
  isRouteErrorResponse,
  Links,
  Meta,
  Outlet,
  Scripts,
  ScrollRestoration,
  type LinksFunction,
} from "react-router";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { useState } from "react";
import type { Route } from "./+types/root";
import "./app.css";

export const links: LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export function Layout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen">
        {children}
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

export default function App() {
  // One query cache per browser tab (created inside the component so server renders never share one).
  const [queryClient] = useState(() => new QueryClient({ defaultOptions: { queries: { staleTime: 10_000, retry: 1 } } }));
  return (
    <QueryClientProvider client={queryClient}>
      <Outlet />
    </QueryClientProvider>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  let title = "Something went wrong";
  let detail = "The error has been logged. Try again, or go back to the projects.";
  if (isRouteErrorResponse(error)) {
    title = error.status === 404 ? "Not found" : `${error.status} ${error.statusText}`;
    detail = typeof error.data === "string" && error.data ? error.data : error.status === 404 ? "There is nothing at this address." : detail;
  } else if (import.meta.env.DEV && error instanceof Error) {
    detail = error.stack ?? error.message;
  }
  return (
    <main className="mx-auto max-w-2xl p-10">
      <h1 className="text-2xl font-semibold text-sediment-950">{title}</h1>
      <pre className="mt-4 whitespace-pre-wrap font-sans text-sediment-600">{detail}</pre>
      <a className="mt-6 inline-block text-deep-700 underline" href="/">
        Back to projects
      </a>
    </main>
  );
}
