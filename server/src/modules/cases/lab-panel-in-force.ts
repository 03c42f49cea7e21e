import type { EntityManager } from '@mikro-orm/postgresql';
import { panelInForce } from '@emberline/shared';
import { LabPanel } from './lab-panel.entity';

/**
 * The panel in force among a case's stored panels, by the one rule of shared/
 * (`panelInForce`: the newest by `takenAt` of those neither superseded nor withdrawn).
 */
export function panelInForceAmong(panels: readonly LabPanel[]): LabPanel | undefined {
  return panelInForce(
    panels.map((panel) => ({
      panel,
      takenAt: panel.takenAt,
      createdAt: panel.createdAt,
      superseded: panel.retirement === 'superseded',
      withdrawn: panel.retirement === 'withdrawn',
    })),
  )?.panel;
}

/**
 * The panel in force of a case, read from the database: every reader of "the case's labs" (the
 * case file's scores, the board summary PDF, the pre-procedure checklist) goes through this.
 */
export async function loadPanelInForce(
  em: EntityManager,
  caseId: string,
): Promise<LabPanel | undefined> {
  return panelInForceAmong(await em.find(LabPanel, { clinicalCase: caseId }));
}
