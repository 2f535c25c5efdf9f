/**
 * Scenario definitions by version id, restored once per process and
 * database. A version is never changed once written, so an entry never goes
 * stale.
 */
import { eq } from 'drizzle-orm';
import { restoreScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import type { DbOrTx } from '../db/client.ts';
import { scenarioVersions } from '../db/schema.ts';
import { scopedCache } from '../db/scoped-cache.ts';
import { notFound } from '../http/errors.ts';

const definitions = scopedCache<number, ScenarioDefinition>(256);

function deepFreeze<T>(x: T): T {
  if (typeof x === 'object' && x !== null && !Object.isFrozen(x)) {
    Object.freeze(x);
    for (const v of Object.values(x)) deepFreeze(v);
  }
  return x;
}

/**
 * A scenario version's definition, restored once per process and shared
 * (frozen, so no caller can change it for the others).
 */
export async function loadDefinition(db: DbOrTx, scenarioVersionId: number): Promise<ScenarioDefinition> {
  const cache = definitions.of(db);
  const hit = cache?.get(scenarioVersionId);
  if (hit) return hit;
  const [row] = await db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).where(eq(scenarioVersions.id, scenarioVersionId));
  if (!row) throw notFound('No such scenario version');
  const def = deepFreeze(restoreScenario(row.definition));
  cache?.set(scenarioVersionId, def);
  return def;
}
