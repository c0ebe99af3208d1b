// The document shell: fonts and styles, the data client, toasts, and the error page of last resort.
import "./zod-config";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { useEffect, useState, type ReactNode } from "react";
import { data, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { GeneralErrorBoundary } from "./components/error-boundary";
import { useNonce } from "./nonce";
import { ToastMessage, useKeptToast } from "./components/toast";
import { readToast } from "./utils/toast.server";
import { LocaleProvider } from "./components/locale";
import { NavigationProgress } from "./components/pending";
import { negotiateLocale, supportedLocale } from "~/domain/locale";
import { getOptionalActor } from "./utils/permissions.server";

export async function loader({ request }: Route.LoaderArgs) {
  // Public: the toast cookie, the viewer's Accept-Language and whether someone is signed in (the header asks
  // /api/me only then, so a signed-out page makes no request that fails). The person is looked up once per request.
  const { toast, headers } = await readToast(request);
  const signedIn = (await getOptionalActor(request)) !== null;
  return data({ toast, locale: negotiateLocale(request.headers.get("accept-language")), signedIn }, { headers });
}

export function Layout({ children }: { children: ReactNode }) {
  const root = useRouteLoaderData<typeof loader>("root");
  const nonce = useNonce();
  const toast = useKeptToast(root?.toast);
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <link rel="icon" href="/favicon.svg" type="image/svg+xml" />
        <Meta />
        <Links nonce={nonce} />
      </head>
      <body className="min-h-screen">
        <LocaleProvider locale={supportedLocale(root?.locale)}>{children}</LocaleProvider>
        {toast ? <ToastMessage toast={toast} /> : null}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App() {
  const [queryClient] = useState(() => new QueryClient({ defaultOptions: { queries: { staleTime: 30_000 } } }));
  // Browser tests wait for this mark before they click.
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return (
    <QueryClientProvider client={queryClient}>
      <NavigationProgress />
      <Outlet />
    </QueryClientProvider>
  );
}

// The fallback for a screen without its own (every route module has one; error pages use this).
export function meta() {
  return [
    { title: "Diffractory — powder-diffraction measurements, bought and sold" },
    { name: "description", content: "A marketplace for powder-diffraction measurements, each delivered scan with an automatic lattice-parameter check." },
  ];
}

export function ErrorBoundary() {
  return <GeneralErrorBoundary />;
}
