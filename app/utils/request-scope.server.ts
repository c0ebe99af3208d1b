// What one HTTP request may share between its loaders: server/app.ts opens a scope around each GET or HEAD
// request, and lookups every loader of the page makes (the session and memberships: the layout's and the
// screen's) run once per request instead of once per loader. Nothing outlives the request; requests with an
// action (POST and friends) get no scope, since an action may change what a later loader must read afresh.
import { AsyncLocalStorage } from "node:async_hooks";

interface RequestScope {
  memo: Map<string, Promise<unknown>>;
}

// One store per process, also when development reloads this module.
const g = globalThis as unknown as { __diffractoryRequestScope?: AsyncLocalStorage<RequestScope> };
const storage = (g.__diffractoryRequestScope ??= new AsyncLocalStorage<RequestScope>());

/** Runs `fn` (the whole handling of one request) with a fresh, empty scope. */
export function withRequestScope<T>(fn: () => T): T {
  return storage.run({ memo: new Map() }, fn);
}

/**
 * `compute()` once per key within the current request's scope; outside a scope (actions, tests calling a
 * loader directly, jobs) it simply runs every time. A failure is shared like a result: the loaders of one
 * request see the same answer.
 */
export function oncePerRequest<T>(key: string, compute: () => Promise<T>): Promise<T> {
  const scope = storage.getStore();
  if (!scope) return compute();
  let kept = scope.memo.get(key) as Promise<T> | undefined;
  if (!kept) {
    kept = compute();
    scope.memo.set(key, kept);
  }
  return kept;
}
