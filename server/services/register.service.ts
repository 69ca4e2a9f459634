import { and, asc, eq } from 'drizzle-orm';
import type { EntrySummary } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { effects, entries, groups, processes, regions, templates, users } from '../db/schema';

/** Largest |variation − nominal| / nominal over every bin of an effect, in percent. */
export function largestEffectPct(kind: 'scale' | 'shape', up: number | number[], down: number | number[], nominal: number[] | undefined) {
  if (kind === 'scale') return 100 * Math.max(Math.abs((up as number) - 1), Math.abs((down as number) - 1));
  let worst = 0;
  (nominal ?? []).forEach((n, b) => {
    if (n > 0) worst = Math.max(worst, Math.abs((up as number[])[b] - n) / n, Math.abs((down as number[])[b] - n) / n);
  });
  return 100 * worst;
}

export async function listEntries(ctx: AppContext, access: Access): Promise<EntrySummary[]> {
  const analysisId = access.analysis.id;
  const rows = await ctx.db
    .select({ entry: entries, group: groups.name, owner: { id: users.id, name: users.name, email: users.email } })
    .from(entries)
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .leftJoin(users, eq(users.id, entries.ownerId))
    .where(eq(entries.analysisId, analysisId))
    .orderBy(asc(entries.key));
  const effectRows = await ctx.db
    .select({
      entryId: effects.entryId,
      kind: effects.kind,
      up: effects.up,
      down: effects.down,
      warnings: effects.warnings,
      region: regions.key,
      process: processes.key,
      nominal: templates.nominal,
    })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .innerJoin(regions, eq(regions.id, effects.regionId))
    .innerJoin(processes, eq(processes.id, effects.processId))
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(eq(entries.analysisId, analysisId));
  const byEntry = new Map<number, typeof effectRows>();
  for (const e of effectRows) {
    byEntry.set(e.entryId, [...(byEntry.get(e.entryId) ?? []), e]);
  }
  return rows.map(({ entry, group, owner }) => {
    const own = byEntry.get(entry.id) ?? [];
    return {
      key: entry.key,
      label: entry.label,
      group,
      owner: owner?.id ? owner : null,
      state: entry.state,
      processes: [...new Set(own.map((e) => e.process))].sort(),
      regions: [...new Set(own.map((e) => e.region))].sort(),
      kinds: [...new Set(own.map((e) => e.kind))].sort(),
      largestEffectPct: own.length ? Math.max(...own.map((e) => largestEffectPct(e.kind, e.up, e.down, e.nominal ?? undefined))) : null,
      warnings: own.reduce((n, e) => n + e.warnings.length, 0),
      updatedAt: entry.updatedAt.toISOString(),
    };
  });
}
