import type { MikroORM } from '@mikro-orm/postgresql';
import { ClinicalCase } from '../cases/case.entity';
import { BoardMembership } from '../boards/board-membership.entity';
import { recordAudit } from '../audit/audit.service';
import type { MailService } from '../mail/mail.service';
import { followUpDueMail } from './booking-mail';
import { ProcedureBooking } from './booking.entity';
import { TreatmentRecord } from './treatment-record.entity';

/**
 * Turns every treated case whose follow-up imaging has fallen due (its live follow-up booking's
 * start, else the proposed date, at or before `now`) into `follow-up-due`, and tells the board's
 * nurse coordinators once by e-mail (reference `follow-up:<caseId>`). Safe with several processes
 * and repeated runs: each case is claimed under `FOR UPDATE SKIP LOCKED` and marked notified in
 * the same transaction, so one run, in one process, takes it. The mail is queued after the commit:
 * a process that dies between the two loses that one mail rather than sending it twice.
 * Answers the ids of the cases it moved.
 */
export async function markDueFollowUps(
  orm: MikroORM,
  mail: MailService | null,
  now: Date,
  options: { timeZone?: string; log?: (message: string, error?: unknown) => void } = {},
): Promise<string[]> {
  const due = await orm.em.fork().transactional(async (em) => {
    const treated = await em.find(
      TreatmentRecord,
      { followUpDueNotifiedAt: null, clinicalCase: { status: 'treated' } },
      { populate: ['clinicalCase'] },
    );
    const moved: { caseId: string; caseCode: string; boardId: string; dueAt: Date }[] = [];
    for (const record of treated) {
      const caseId = record.clinicalCase.id;
      const booking = await em.findOne(ProcedureBooking, {
        clinicalCase: caseId,
        kind: 'follow-up-imaging',
        state: { $in: ['booked', 'confirmed'] },
      });
      const dueAt = booking?.startsAt ?? record.followUpProposedAt;
      if (dueAt.getTime() > now.getTime()) continue;
      // Claimed by this run only: another process holding the row skips it.
      const rows = await em.execute<{ id: string }[]>(
        'select "id" from "treatment_record" where "id" = ? and "follow_up_due_notified_at" is null for update skip locked',
        [record.id],
      );
      if (!rows.length) continue;
      const clinicalCase = await em.findOneOrFail(ClinicalCase, caseId, { refresh: true });
      if (clinicalCase.status !== 'treated') continue;
      clinicalCase.status = 'follow-up-due';
      await em.nativeUpdate(TreatmentRecord, { id: record.id }, { followUpDueNotifiedAt: now });
      // The due check acts on its own: no user, no address.
      recordAudit(
        em,
        { id: null, email: null, ip: null },
        {
          action: 'follow-up.due',
          entityType: 'case',
          entityId: caseId,
          detail: { dueAt: dueAt.toISOString(), isBooked: booking !== null },
        },
      );
      moved.push({
        caseId,
        caseCode: clinicalCase.caseCode,
        boardId: clinicalCase.board.id,
        dueAt,
      });
    }
    return moved;
  });
  if (mail) {
    for (const entry of due) {
      try {
        const coordinators = await orm.em
          .fork()
          .find(BoardMembership, { board: entry.boardId }, { populate: ['user'] });
        const to = coordinators
          .map((membership) => membership.user.getEntity())
          .filter((user) => user.isActive && user.roles.includes('nurse-coordinator'))
          .map((user) => user.email);
        if (to.length) {
          await mail.queueMail(
            followUpDueMail(
              entry.caseCode,
              entry.dueAt,
              to,
              entry.caseId,
              options.timeZone ?? 'UTC',
            ),
          );
        }
      } catch (error) {
        options.log?.(`The follow-up mail could not be queued (case ${entry.caseId})`, error);
      }
    }
  }
  return due.map((entry) => entry.caseId);
}

/**
 * Runs `markDueFollowUps` at start and then every `intervalMinutes` (`FOLLOW_UP_CHECK_MINUTES`,
 * default 15). Every server process may run it: the row claim above keeps each case to one run.
 */
export function startFollowUpDueCheck(
  orm: MikroORM,
  mail: MailService | null,
  options: {
    timeZone: string;
    intervalMinutes: number;
    log: (message: string, error?: unknown) => void;
  },
): { stop(): void } {
  let running: Promise<unknown> | null = null;
  const run = () => {
    if (running) return;
    running = markDueFollowUps(orm, mail, new Date(), options)
      .catch((error: unknown) => options.log('The follow-up due check failed', error))
      .finally(() => {
        running = null;
      });
  };
  run();
  const timer = setInterval(run, options.intervalMinutes * 60_000);
  timer.unref();
  return {
    stop() {
      clearInterval(timer);
    },
  };
}
