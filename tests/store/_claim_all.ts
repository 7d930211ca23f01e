// Helper process for sqlite_store_test.ts: claim and finish jobs until none is
// left, then print the claimed ids as JSON.
import { SqliteStore } from "../../src/store/sqlite_store.ts";

const [db, owner] = Deno.args;
const store = SqliteStore.open(db);
const claimed: string[] = [];
while (true) {
  const c = store.claimJob(owner, 60_000);
  if (!c) break;
  claimed.push(c.job.id);
  if (!store.finishJob(c.job.id, owner, c.attempt, { status: "done", result: { by: owner } })) {
    throw new Error(`lost ${c.job.id}`);
  }
}
store.close();
console.log(JSON.stringify(claimed));
