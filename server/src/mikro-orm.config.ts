import { defineConfig } from '@mikro-orm/postgresql';
import { Migrator } from '@mikro-orm/migrations';
import { fileURLToPath } from 'node:url';
import { Assessment } from './modules/assessments/assessment.entity';
import { AuditEvent } from './modules/audit/audit-event.entity';
import { Board } from './modules/boards/board.entity';
import { BoardMembership } from './modules/boards/board-membership.entity';
import { ClinicalCase } from './modules/cases/case.entity';
import { LabPanel } from './modules/cases/lab-panel.entity';
import { Lesion } from './modules/cases/lesion.entity';
import { ImageSeries } from './modules/imaging/image-series.entity';
import { UidReplacement } from './modules/imaging/uid-replacement.entity';
import { LabelMap } from './modules/structures/label-map.entity';
import { Structure } from './modules/structures/structure.entity';
import { ApplicatorProfile } from './modules/plans/applicator-profile.entity';
import { NeedlePlan } from './modules/plans/needle-plan.entity';
import { SafetyProfile } from './modules/plans/safety-profile.entity';
import { SamlAssertionSeen } from './modules/saml/saml-assertion.entity';
import { SamlRequest } from './modules/saml/saml-request.entity';
import { ApplicatorProfileVersion } from './modules/plans/applicator-profile-version.entity';
import { SafetyProfileVersion } from './modules/plans/safety-profile-version.entity';
import { Attendance } from './modules/meetings/attendance.entity';
import { Minutes } from './modules/meetings/minutes.entity';
import { MailDelivery } from './modules/mail/mail-delivery.entity';
import { ProcedureBooking } from './modules/bookings/booking.entity';
import { BookingEvent } from './modules/bookings/booking-event.entity';
import { ChecklistThreshold } from './modules/bookings/checklist-threshold.entity';
import { TreatmentRecord } from './modules/bookings/treatment-record.entity';
import { Vote } from './modules/votes/vote.entity';
import { ItemComment } from './modules/votes/comment.entity';
import { Annotation } from './modules/annotations/annotation.entity';
import { KeyImage } from './modules/key-images/key-image.entity';
import { Decision } from './modules/decisions/decision.entity';
import { DecisionAmendment } from './modules/decisions/decision-amendment.entity';
import { AgendaItem } from './modules/meetings/agenda-item.entity';
import { Meeting } from './modules/meetings/meeting.entity';
import { HttpSession } from './modules/sessions/http-session.entity';
import { SignInFailure } from './modules/auth/sign-in-failure.entity';
import { RolePolicy } from './modules/users/role-policy.entity';
import { User } from './modules/users/user.entity';
import { databaseUrl } from './database-url';
import { NotFoundError } from './common/errors';

const migrationsPath = fileURLToPath(new URL('../migrations', import.meta.url));

export const entities = [
  User,
  RolePolicy,
  Board,
  BoardMembership,
  ClinicalCase,
  Lesion,
  LabPanel,
  AuditEvent,
  HttpSession,
  SignInFailure,
  SamlRequest,
  SamlAssertionSeen,
  ImageSeries,
  UidReplacement,
  LabelMap,
  Structure,
  ApplicatorProfile,
  ApplicatorProfileVersion,
  SafetyProfile,
  SafetyProfileVersion,
  NeedlePlan,
  Assessment,
  Meeting,
  AgendaItem,
  Attendance,
  Minutes,
  Vote,
  ItemComment,
  Annotation,
  KeyImage,
  Decision,
  DecisionAmendment,
  MailDelivery,
  ProcedureBooking,
  BookingEvent,
  ChecklistThreshold,
  TreatmentRecord,
];

/** "NeedlePlan" → "The needle plan": how a miss names what was looked for. */
function recordNameOf(entityName: string): string {
  return `The ${entityName.replace(/(?<=[a-z])(?=[A-Z])/g, ' ').toLowerCase()}`;
}

/** MikroORM settings; `clientUrl` decides the database (tests pass their own). */
export function ormConfig(clientUrl = databaseUrl()) {
  return defineConfig({
    clientUrl,
    entities,
    extensions: [Migrator],
    // Explicit property types everywhere: tsx/esbuild emits no decorator metadata.
    discovery: { requireEntitiesArray: true },
    // A `findOneOrFail` miss is the product's own 404, never the ORM's message with the query.
    findOneOrFailHandler: (entityName: string) => new NotFoundError(recordNameOf(entityName)),
    migrations: {
      path: migrationsPath,
      pathTs: migrationsPath,
      glob: '!(*.d).{js,ts}',
      transactional: true,
      allOrNothing: true,
      snapshot: true,
      // One snapshot whatever the database is called (tests use databases of their own).
      snapshotName: '.snapshot-emberline',
      emit: 'ts',
    },
    preferTs: import.meta.url.endsWith('.ts'),
    pool: { min: 0, max: 10 },
    debug: false,
    // Migrations, never schema sync: nothing creates tables at start.
    ensureDatabase: false,
  });
}

export default ormConfig();
