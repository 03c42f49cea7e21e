import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { RecordTreatment, TreatmentView } from '@emberline/shared';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import { BookingEvent } from './booking-event.entity';
import { ProcedureBooking } from './booking.entity';
import { TreatmentRecord } from './treatment-record.entity';

/**
 * The first follow-up imaging is proposed four weeks after the procedure: contrast-enhanced CT
 * or MRI about one month after ablation is common practice (e.g. the image-guided tumour ablation
 * reporting standards, Ahmed M et al., Radiology 2014;273:241–260; from memory, to be checked
 * against the publication and the local protocol).
 */
export const followUpIntervalDays = 28;
export const followUpBasis =
  'First contrast-enhanced CT or MRI about 4 weeks (1 month) after the procedure: common practice ' +
  '(e.g. image-guided tumour ablation reporting standards, Ahmed M et al., Radiology ' +
  '2014;273:241–260; from memory). The treating team decides, following the local protocol.';

export function toTreatmentView(record: TreatmentRecord): TreatmentView {
  const operator = record.operator.getEntity();
  return {
    performedAt: record.performedAt.toISOString(),
    operator: { id: operator.id, displayName: operator.displayName },
    applicatorsUsed: record.applicatorsUsed,
    deviation: record.deviation,
    complicationGrade: record.complicationGrade,
    complicationNote: record.complicationNote,
    recordedAt: record.createdAt.toISOString(),
    followUp: {
      proposedDate: record.followUpProposedAt.toISOString(),
      interval: `${followUpIntervalDays / 7} weeks`,
      basis: followUpBasis,
    },
  };
}

/**
 * The procedure recorded by the booking's operator, once the booking is confirmed: the booking is
 * done, the case treated, and the first follow-up imaging proposed at the usual interval.
 */
export async function recordTreatment(
  em: EntityManager,
  user: SignedInUser,
  actor: Actor,
  caseId: string,
  body: RecordTreatment,
): Promise<TreatmentView> {
  const found = await em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
  const booking = await em.findOne(ProcedureBooking, {
    clinicalCase: found.id,
    kind: 'procedure',
    state: { $in: ['booked', 'confirmed'] },
  });
  if (!booking || booking.operator?.id !== user.id) {
    throw new ForbiddenError(
      'Only the operator of the case’s booked procedure records the treatment.',
    );
  }
  if (booking.state !== 'confirmed') {
    throw new ConflictError('The booking is not confirmed: its checklist comes first.');
  }
  const performedAt = new Date(body.performedAt);
  if (performedAt.getTime() > Date.now() + 5 * 60_000) {
    const message = 'The treatment is recorded once performed: not in the future.';
    throw new ValidationError(`performedAt: ${message}`, [{ path: 'performedAt', message }]);
  }
  const recordId = await em.transactional(async (tx) => {
    const locked = await tx.findOneOrFail(ClinicalCase, found.id, {
      lockMode: LockMode.PESSIMISTIC_WRITE,
      refresh: true,
    });
    const lockedBooking = await tx.findOneOrFail(ProcedureBooking, booking.id, {
      lockMode: LockMode.PESSIMISTIC_WRITE,
      refresh: true,
    });
    if (locked.status !== 'booked' || lockedBooking.state !== 'confirmed') {
      throw new ConflictError(`The case is ${locked.status} now; nothing was recorded.`);
    }
    const record = new TreatmentRecord({
      clinicalCase: tx.getReference(ClinicalCase, found.id, { wrapped: true }),
      booking: tx.getReference(ProcedureBooking, booking.id, { wrapped: true }),
      operator: tx.getReference(User, user.id, { wrapped: true }),
      performedAt,
      applicatorsUsed: body.applicatorsUsed,
      complicationGrade: body.complicationGrade,
      followUpProposedAt: new Date(performedAt.getTime() + followUpIntervalDays * 86_400_000),
    });
    record.deviation = body.deviation || null;
    record.complicationNote = body.complicationNote || null;
    tx.persist(record);
    lockedBooking.state = 'done';
    tx.persist(
      new BookingEvent({
        booking: tx.getReference(ProcedureBooking, booking.id, { wrapped: true }),
        action: 'done',
        by: tx.getReference(User, user.id, { wrapped: true }),
      }),
    );
    locked.status = 'treated';
    recordAudit(tx, actor, {
      action: 'treatment.record',
      entityType: 'case',
      entityId: found.id,
      detail: { bookingId: booking.id, complicationGrade: body.complicationGrade },
    });
    return record.id;
  });
  const record = await em.fork().findOne(TreatmentRecord, recordId, { populate: ['operator'] });
  if (!record) throw new NotFoundError('The treatment record');
  return toTreatmentView(record);
}
