import type { EntityManager } from '@mikro-orm/postgresql';
import {
  DEFAULT_REHEARSAL_SETTINGS,
  computeLiverScores,
  albuminToGDl,
  bilirubinToMgDl,
  creatinineToMgDl,
  type CaseDetail,
  type CaseListQuery,
  type CaseSummary,
  seriesLabel,
  type LabPanelView,
  type LiverScores,
  type Page,
  createCaseSchema,
  createLabPanelSchema,
  createLesionSchema,
  correctLabPanelSchema,
  updateCaseSchema,
  updateLesionSchema,
} from '@emberline/shared';
import type { z } from 'zod';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { Board } from '../boards/board.entity';
import { User } from '../users/user.entity';
import { ClinicalCase } from './case.entity';
import { LabPanel } from './lab-panel.entity';
import { panelInForceAmong } from './lab-panel-in-force';
import { Lesion } from './lesion.entity';
import { CaseRepository } from './case.repository';
import { visibilityFilter } from './case-visibility';
import { assertCaseOpenForChanges, isCaseOpenForChanges } from './case-open-for-changes';
import { MeetingService } from '../meetings/meeting.service';
import { AgendaItem } from '../meetings/agenda-item.entity';
import type { FileStore } from '../imaging/file-store';
import { KeyImage } from '../key-images/key-image.entity';
import { ImageSeries } from '../imaging/image-series.entity';
import { LabelMap } from '../structures/label-map.entity';
import { Structure } from '../structures/structure.entity';
import {
  loadSuggestionTargets,
  refreshLesionSuggestions,
} from '../structures/lesion-link-suggestions';
import { logger } from '../../common/logger';

/** Where a case's image files live, so that deleting a draft leaves none behind. */
export interface CaseFileStores {
  volumes: FileStore;
  labelMaps: FileStore;
}

type CreateCase = z.output<typeof createCaseSchema>;
type UpdateCase = z.output<typeof updateCaseSchema>;
type CreateLesion = z.output<typeof createLesionSchema>;
type CreateLabPanel = z.output<typeof createLabPanelSchema>;
type UpdateLesion = z.output<typeof updateLesionSchema>;
type CorrectLabPanel = z.output<typeof correctLabPanelSchema>;

/**
 * Case rules (DEVELOPERS.md, "The product's shape"): a case is seen only by members of its
 * board; clinicians see every state, a nurse coordinator only decided ones; the presenting
 * physician edits own cases. A case the user may not see answers 404, a forbidden action on a
 * visible case 403.
 */
export class CaseService {
  constructor(
    private readonly em: EntityManager,
    private readonly stores?: CaseFileStores,
  ) {}

  private get cases(): CaseRepository {
    return this.em.getRepository(ClinicalCase) as CaseRepository;
  }

  async list(user: SignedInUser, query: CaseListQuery): Promise<Page<CaseSummary>> {
    const [items, total] = await this.cases.findVisiblePage(visibilityFilter(user), query);
    const nextMeetings = await new MeetingService(this.em).nextMeetingOf(
      items.map((found) => found.id),
    );
    return {
      items: items.map((found) => ({
        ...toSummary(found),
        nextMeetingAt: nextMeetings.get(found.id) ?? null,
      })),
      total,
      page: query.page,
      size: query.size,
    };
  }

  async get(user: SignedInUser, actor: Actor, id: string): Promise<CaseDetail> {
    const found = await this.findVisible(user, id);
    recordAudit(this.em, actor, { action: 'case.read', entityType: 'case', entityId: found.id });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  async create(user: SignedInUser, actor: Actor, body: CreateCase): Promise<CaseDetail> {
    if (!hasRole(user, 'presenting-physician'))
      throw new ForbiddenError('Only a presenting physician creates cases.');
    if (!user.memberships.has(body.boardId)) throw new NotFoundError('The board');
    const presenterId = body.presenterId ?? user.id;
    await this.assertPresenter(presenterId, body.boardId);
    if (await this.cases.count({ caseCode: body.caseCode })) {
      throw new ConflictError(`The case code ${body.caseCode} is taken; choose another.`);
    }
    const created = new ClinicalCase({
      caseCode: body.caseCode,
      board: this.em.getReference(Board, body.boardId, { wrapped: true }),
      presenter: this.em.getReference(User, presenterId, { wrapped: true }),
      yearOfBirth: body.yearOfBirth,
      sex: body.sex,
      primaryDiagnosis: body.primaryDiagnosis,
    });
    created.ecogPerformanceStatus = body.ecogPerformanceStatus ?? null;
    created.hasVascularInvasion = body.hasVascularInvasion ?? null;
    created.hasExtrahepaticSpread = body.hasExtrahepaticSpread ?? null;
    this.em.persist(created);
    recordAudit(this.em, actor, {
      action: 'case.create',
      entityType: 'case',
      entityId: created.id,
    });
    await this.em.flush();
    return this.get(user, actor, created.id);
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    id: string,
    body: UpdateCase,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, id);
    if (body.status && !['draft', 'ready-for-board'].includes(found.status)) {
      throw new ConflictError('Only a draft or a case ready for board changes state here.');
    }
    if (body.caseCode && body.caseCode !== found.caseCode) {
      if (await this.cases.count({ caseCode: body.caseCode })) {
        throw new ConflictError(`The case code ${body.caseCode} is taken; choose another.`);
      }
    }
    if (body.presenterId && body.presenterId !== found.presenter.id) {
      await this.assertPresenter(body.presenterId, found.board.id);
      found.presenter = this.em.getReference(User, body.presenterId, { wrapped: true });
    }
    const changed = Object.keys(body).filter((key) => key !== 'presenterId');
    for (const key of changed) {
      const value = body[key as keyof UpdateCase];
      if (value !== undefined) Object.assign(found, { [key]: value });
    }
    recordAudit(this.em, actor, {
      action: 'case.update',
      entityType: 'case',
      entityId: found.id,
      detail: { fields: Object.keys(body) },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  async remove(user: SignedInUser, actor: Actor, id: string): Promise<void> {
    const found = await this.findEditable(user, id);
    if (found.status !== 'draft') throw new ConflictError('Only a draft case can be deleted.');
    await found.lesions.init();
    await found.labPanels.init();
    const series = await this.em.find(ImageSeries, { clinicalCase: found.id });
    const labelMaps = series.length
      ? await this.em.find(LabelMap, { series: { $in: series.map((s) => s.id) } })
      : [];
    const keyImages = await this.em.find(KeyImage, { clinicalCase: found.id });
    this.em.remove(found);
    recordAudit(this.em, actor, { action: 'case.delete', entityType: 'case', entityId: found.id });
    await this.em.flush();
    // The rows went with the case (cascade); the files go after the commit, so a failed
    // delete never leaves rows pointing at missing files.
    const { stores } = this;
    if (!stores) return;
    const removals = await Promise.allSettled([
      ...series.map((s) => stores.volumes.remove(s.storageKey)),
      ...labelMaps.map((m) => stores.labelMaps.remove(m.storageKey)),
      // Key images live under the imaging store's root, in their own folder.
      ...keyImages.map((k) => stores.volumes.remove(k.storageKey)),
    ]);
    if (removals.some((r) => r.status === 'rejected')) {
      logger.warn(`deleting case ${found.id} left image files behind`);
    }
  }

  async addLesion(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreateLesion,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, caseId);
    const lesion = new Lesion(
      this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      body.segment,
      body.diameterMm,
      body.kind,
    );
    const existing = await this.em.find(Lesion, { clinicalCase: found.id });
    const suggestionsChanged = await this.refreshSuggestions(found.id, [...existing, lesion]);
    this.em.persist(lesion);
    recordAudit(this.em, actor, {
      action: 'lesion.create',
      entityType: 'case',
      entityId: found.id,
      detail: { lesionId: lesion.id, suggestionsChanged },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  async removeLesion(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    lesionId: string,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, caseId);
    const lesions = await this.em.find(Lesion, { clinicalCase: found.id });
    const lesion = lesions.find((candidate) => candidate.id === lesionId);
    if (!lesion) throw new NotFoundError('The lesion');
    // Structures linked to it lose the link (confirmed or not) and take a new suggestion.
    const rest = lesions.filter((candidate) => candidate.id !== lesionId);
    const suggestionsChanged = await this.refreshSuggestions(found.id, rest);
    this.em.remove(lesion);
    recordAudit(this.em, actor, {
      action: 'lesion.delete',
      entityType: 'case',
      entityId: found.id,
      detail: { lesionId, suggestionsChanged },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  /**
   * Corrects a lesion in place (segment, diameter, kind). Links of structures confirmed for it
   * stay; unconfirmed suggestions are worked out again with the corrected lesion.
   */
  async updateLesion(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    lesionId: string,
    body: UpdateLesion,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, caseId);
    const lesions = await this.em.find(Lesion, { clinicalCase: found.id });
    const lesion = lesions.find((candidate) => candidate.id === lesionId);
    if (!lesion) throw new NotFoundError('The lesion');
    // Loaded before the change, so that the query does not flush it early.
    const targets = this.stores ? await loadSuggestionTargets(this.em, { caseId: found.id }) : [];
    const changed: string[] = [];
    if (body.segment !== undefined && body.segment !== lesion.segment) {
      changed.push('segment');
      lesion.segment = body.segment;
    }
    if (body.diameterMm !== undefined && body.diameterMm !== lesion.diameterMm) {
      changed.push('diameterMm');
      lesion.diameterMm = body.diameterMm;
    }
    if (body.kind !== undefined && body.kind !== lesion.kind) {
      changed.push('kind');
      lesion.kind = body.kind;
    }
    const suggestionsChanged =
      this.stores && changed.length
        ? (await refreshLesionSuggestions(this.stores.labelMaps, targets, lesions)).length
        : 0;
    recordAudit(this.em, actor, {
      action: 'lesion.update',
      entityType: 'case',
      entityId: found.id,
      detail: { lesionId, changed, suggestionsChanged },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  /**
   * Stores the tumours' suggested lesions for the case's lesions as they will be after this
   * change (structures/lesion-link-suggestions.ts); answers how many suggestions changed. Run
   * before the change is persisted, so that its queries do not flush it early.
   */
  private async refreshSuggestions(caseId: string, lesions: Lesion[]): Promise<number> {
    if (!this.stores) return 0;
    const targets = await loadSuggestionTargets(this.em, { caseId });
    return (await refreshLesionSuggestions(this.stores.labelMaps, targets, lesions)).length;
  }

  async addLabPanel(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreateLabPanel,
  ): Promise<CaseDetail> {
    const found = await this.findVisible(user, caseId);
    if (!canAddLabPanel(user, found)) {
      throw isCaseOpenForChanges(found.status)
        ? new ForbiddenError('Only the presenting physician of this case edits it.')
        : new ForbiddenError(
            "Once decided, the presenter, the board's proceduralists and nurse coordinators record new labs.",
          );
    }
    const panel = new LabPanel(
      this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      this.em.getReference(User, user.id, { wrapped: true }),
      { ...body, takenAt: new Date(body.takenAt) },
    );
    this.em.persist(panel);
    recordAudit(this.em, actor, {
      action: 'lab-panel.create',
      entityType: 'case',
      entityId: found.id,
      detail: { labPanelId: panel.id, isAfterDecision: !isCaseOpenForChanges(found.status) },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  /**
   * A correction: the corrected values become a new panel (entered by the corrector, now); the
   * old panel is kept, marked superseded by it with the reason, who and when. Only a panel in
   * the running (neither superseded nor withdrawn) is corrected: 409 otherwise.
   */
  async correctLabPanel(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    panelId: string,
    body: CorrectLabPanel,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, caseId);
    const old = await this.findLabPanelInRunning(found.id, panelId);
    const { reason, ...values } = body;
    const correction = new LabPanel(
      this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      this.em.getReference(User, user.id, { wrapped: true }),
      { ...values, takenAt: new Date(values.takenAt) },
    );
    this.em.persist(correction);
    this.retire(old, user, 'superseded', reason);
    old.supersededBy = this.em.getReference(LabPanel, correction.id, { wrapped: true });
    recordAudit(this.em, actor, {
      action: 'lab-panel.correct',
      entityType: 'case',
      entityId: found.id,
      detail: { labPanelId: old.id, correctionId: correction.id },
    });
    // The new row first, then the old one's link to it (a foreign key to a row written in the
    // same flush).
    await this.em.flush();
    return this.toDetail(user, found);
  }

  /** A withdrawal: the panel is kept, marked withdrawn with the reason, who and when. */
  async withdrawLabPanel(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    panelId: string,
    reason: string,
  ): Promise<CaseDetail> {
    const found = await this.findEditable(user, caseId);
    const panel = await this.findLabPanelInRunning(found.id, panelId);
    this.retire(panel, user, 'withdrawn', reason);
    recordAudit(this.em, actor, {
      action: 'lab-panel.withdraw',
      entityType: 'case',
      entityId: found.id,
      detail: { labPanelId: panel.id },
    });
    await this.em.flush();
    return this.toDetail(user, found);
  }

  private async findLabPanelInRunning(caseId: string, panelId: string): Promise<LabPanel> {
    const panel = await this.em.findOne(LabPanel, { id: panelId, clinicalCase: caseId });
    if (!panel) throw new NotFoundError('The lab panel');
    if (panel.retirement) {
      throw new ConflictError(
        `The lab panel is already ${panel.retirement}; correct or withdraw the panel that replaced it.`,
      );
    }
    return panel;
  }

  private retire(
    panel: LabPanel,
    user: SignedInUser,
    retirement: 'superseded' | 'withdrawn',
    reason: string,
  ): void {
    panel.retirement = retirement;
    panel.retiredReason = reason;
    panel.retiredBy = this.em.getReference(User, user.id, { wrapped: true });
    panel.retiredAt = new Date();
  }

  private findVisible(user: SignedInUser, id: string): Promise<ClinicalCase> {
    return this.cases.findVisibleOrFail(user, id, ['board', 'presenter']);
  }

  private async findEditable(user: SignedInUser, id: string): Promise<ClinicalCase> {
    const found = await this.findVisible(user, id);
    if (!canEdit(user, found))
      throw new ForbiddenError('Only the presenting physician of this case edits it.');
    assertCaseOpenForChanges(found);
    return found;
  }

  private async assertPresenter(presenterId: string, boardId: string): Promise<void> {
    const presenter = await this.em.findOne(User, { id: presenterId, isActive: true });
    const isMember =
      presenter &&
      (await this.em.count('BoardMembership', { user: presenterId, board: boardId })) > 0;
    if (!presenter || !isMember || !presenter.roles.includes('presenting-physician')) {
      throw new ConflictError("The presenter must be a presenting physician of the case's board.");
    }
  }

  private async toDetail(user: SignedInUser, found: ClinicalCase): Promise<CaseDetail> {
    const lesions = await this.em.find(
      Lesion,
      { clinicalCase: found.id },
      { orderBy: { createdAt: 'asc' } },
    );
    const panels = await this.em.find(
      LabPanel,
      { clinicalCase: found.id },
      {
        orderBy: { takenAt: 'desc', createdAt: 'desc' },
        populate: ['enteredBy', 'retiredBy'],
      },
    );
    const inForce = panelInForceAmong(panels);
    const links = lesions.length
      ? await this.em.find(
          Structure,
          { lesion: { $in: lesions.map((lesion) => lesion.id) } },
          { populate: ['series'], orderBy: { name: 'asc' } },
        )
      : [];
    const board = found.board.getEntity();
    const presenter = await found.presenter.load();
    const isEditable = canEdit(user, found) && isCaseOpenForChanges(found.status);
    const agendaItem = await this.em.findOne(
      AgendaItem,
      { clinicalCase: found.id, closedAt: null, meeting: { state: { $ne: 'closed' } } },
      { populate: ['meeting'] },
    );
    const meeting = agendaItem?.meeting.getEntity();
    return {
      nextMeeting: meeting ? { id: meeting.id, startsAt: meeting.startsAt.toISOString() } : null,
      id: found.id,
      caseCode: found.caseCode,
      board: { id: board.id, name: board.name },
      presenter: {
        id: presenter?.id ?? found.presenter.id,
        displayName: presenter?.displayName ?? '',
      },
      yearOfBirth: found.yearOfBirth,
      sex: found.sex,
      primaryDiagnosis: found.primaryDiagnosis,
      status: found.status,
      ecogPerformanceStatus: found.ecogPerformanceStatus,
      hasVascularInvasion: found.hasVascularInvasion,
      hasExtrahepaticSpread: found.hasExtrahepaticSpread,
      rehearsal: found.rehearsal ?? DEFAULT_REHEARSAL_SETTINGS,
      hasOwnRehearsalSettings: found.rehearsal !== null,
      lesions: lesions.map((lesion) => ({
        id: lesion.id,
        segment: lesion.segment,
        diameterMm: lesion.diameterMm,
        kind: lesion.kind,
        linkedStructures: links
          .filter((structure) => structure.lesion?.id === lesion.id)
          .map((structure) => ({
            name: structure.name,
            seriesLabel: seriesLabel(structure.series.getEntity()),
            isConfirmed: structure.isLesionConfirmed,
          })),
      })),
      labPanels: panels.map((panel) => ({
        id: panel.id,
        takenAt: panel.takenAt.toISOString(),
        bilirubin: { value: panel.bilirubinValue, unit: panel.bilirubinUnit },
        albumin: { value: panel.albuminValue, unit: panel.albuminUnit },
        inr: panel.inr,
        creatinine: { value: panel.creatinineValue, unit: panel.creatinineUnit },
        sodiumMmolL: panel.sodiumMmolL,
        plateletsE9L: panel.plateletsE9L,
        ascites: panel.ascites,
        encephalopathy: panel.encephalopathy,
        dialysisTwiceInPastWeek: panel.dialysisTwiceInPastWeek,
        enteredBy: panel.enteredBy.getEntity().displayName,
        createdAt: panel.createdAt.toISOString(),
        ...retirementView(panel, panels),
      })),
      labPanelInForceId: inForce?.id ?? null,
      scores: scoresOf(found, lesions, inForce),
      permissions: {
        canEdit: isEditable,
        canDelete: isEditable && found.status === 'draft',
        canAddLabPanel: canAddLabPanel(user, found),
      },
      createdAt: found.createdAt.toISOString(),
      updatedAt: found.updatedAt.toISOString(),
    };
  }
}

/** How a panel left force, for the lab history; nothing while it is in the running. */
function retirementView(
  panel: LabPanel,
  panels: readonly LabPanel[],
): Pick<LabPanelView, 'superseded' | 'withdrawn' | 'correctsPanelId'> {
  const corrects = panels.find((other) => other.supersededBy?.id === panel.id);
  const view: Pick<LabPanelView, 'superseded' | 'withdrawn' | 'correctsPanelId'> = {};
  if (corrects) view.correctsPanelId = corrects.id;
  if (!panel.retirement || !panel.retiredAt) return view;
  const change = {
    reason: panel.retiredReason ?? '',
    by: panel.retiredBy?.getEntity().displayName ?? '',
    at: panel.retiredAt.toISOString(),
  };
  if (panel.retirement === 'withdrawn') view.withdrawn = change;
  else view.superseded = { ...change, byPanelId: panel.supersededBy?.id ?? '' };
  return view;
}

/**
 * Scores from the lab panel in force (`loadPanelInForce`); no panel in force leaves every
 * lab-based score null. Exported for the board summary PDF, so that it prints the same scores
 * as the case file.
 */
export function scoresOf(
  found: ClinicalCase,
  lesions: Lesion[],
  latest: LabPanel | undefined,
): LiverScores {
  return computeLiverScores({
    bilirubinMgDl: latest
      ? bilirubinToMgDl({ value: latest.bilirubinValue, unit: latest.bilirubinUnit })
      : null,
    albuminGDl: latest
      ? albuminToGDl({ value: latest.albuminValue, unit: latest.albuminUnit })
      : null,
    inr: latest?.inr ?? null,
    creatinineMgDl: latest
      ? creatinineToMgDl({ value: latest.creatinineValue, unit: latest.creatinineUnit })
      : null,
    sodiumMmolL: latest?.sodiumMmolL ?? null,
    ascites: latest?.ascites ?? null,
    encephalopathy: latest?.encephalopathy ?? null,
    dialysisTwiceInPastWeek: latest?.dialysisTwiceInPastWeek ?? null,
    lesionDiametersMm: lesions.map((lesion) => lesion.diameterMm),
    ecogPerformanceStatus: found.ecogPerformanceStatus,
    hasVascularInvasion: found.hasVascularInvasion,
    hasExtrahepaticSpread: found.hasExtrahepaticSpread,
  });
}

function canEdit(user: SignedInUser, found: ClinicalCase): boolean {
  return hasRole(user, 'presenting-physician') && found.presenter.id === user.id;
}

/**
 * Who records a new lab panel: the presenter while the case is open for changes; once decided,
 * also the board's proceduralists and nurse coordinators (the caller has checked the user sees
 * the case, so is on its board). Labs drawn before the procedure are new facts, not edits of
 * what the board saw: they are added beside the earlier panels, which stay as they were, and
 * the pre-procedure checklist reads the panel in force.
 */
function canAddLabPanel(user: SignedInUser, found: ClinicalCase): boolean {
  if (isCaseOpenForChanges(found.status)) return canEdit(user, found);
  return (
    canEdit(user, found) || hasRole(user, 'proceduralist') || hasRole(user, 'nurse-coordinator')
  );
}

function toSummary(found: ClinicalCase): CaseSummary {
  return {
    id: found.id,
    caseCode: found.caseCode,
    boardId: found.board.id,
    boardName: found.board.getEntity().name,
    presenterName: found.presenter.getEntity().displayName,
    primaryDiagnosis: found.primaryDiagnosis,
    status: found.status,
    nextMeetingAt: null,
    updatedAt: found.updatedAt.toISOString(),
  };
}
