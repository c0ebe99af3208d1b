// Keeps a screen's data fresh while something is expected to change elsewhere (the lab uploading files, say).
import { useEffect, useRef } from "react";
import { useRevalidator } from "react-router";

/** How often a waiting screen asks its loaders again. */
export const WAITING_REFRESH_MS = 3000;

/**
 * While `active`, asks the route's loaders again every `ms` when the tab is visible and nothing else is
 * loading; stops as soon as `active` turns false. Form fields the person is typing in are kept.
 */
export function useRefreshWhile(active: boolean, ms = WAITING_REFRESH_MS) {
  const revalidator = useRevalidator();
  const latest = useRef(revalidator);
  latest.current = revalidator;
  useEffect(() => {
    if (!active) return;
    const timer = setInterval(() => {
      if (document.visibilityState === "visible" && latest.current.state === "idle") void latest.current.revalidate();
    }, ms);
    return () => clearInterval(timer);
  }, [active, ms]);
}
