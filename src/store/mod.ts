/**
 * Persistence: the {@link Store} interface and its SQLite engine.
 *
 * @module
 */
export * from "./store.ts";
export * from "./sqlite_store.ts";
