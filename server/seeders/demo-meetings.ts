/**
 * The demo's board meetings, an invented scenario of our own: North Liver Board requires
 * hepatology, diagnostic and interventional radiology for quorum; an upcoming meeting chaired by
 * the demo proceduralist holds NLB-2026-014 then NLB-2026-027 on its agenda; a meeting held
 * earlier today discussed NLB-2026-022, whose decision was signed there, and was closed with its
 * minutes frozen.
 *
 * The past meeting is replayed through the product's own services (votes, comment, decision,
 * close), with a room that reports the three attending members as present, so its record is
 * exactly what the live session would have written.
 */
import type { EntityManager } from '@mikro-orm/postgresql';
import type { PresentMember } from '@emberline/shared';
import type { Actor, SignedInUser } from '../src/common/request-context';
import { BoardRoom } from '../src/modules/board-session/board-room';
import { Board } from '../src/modules/boards/board.entity';
import { ClinicalCase } from '../src/modules/cases/case.entity';
import { LabPanel } from '../src/modules/cases/lab-panel.entity';
import { Lesion } from '../src/modules/cases/lesion.entity';
import { DecisionService } from '../src/modules/decisions/decision.service';
import { AgendaItem } from '../src/modules/meetings/agenda-item.entity';
import { Attendance } from '../src/modules/meetings/attendance.entity';
import { Meeting } from '../src/modules/meetings/meeting.entity';
import { MeetingService } from '../src/modules/meetings/meeting.service';
import { MinutesService } from '../src/modules/meetings/minutes.service';
import { User } from '../src/modules/users/user.entity';
import { loadSignedInUser } from '../src/modules/users/user.service';
import { CommentService } from '../src/modules/votes/comment.service';
import { VoteService } from '../src/modules/votes/vote.service';
import { demoPassword } from './demo-seed';

const seedActor: Actor = { id: null, email: 'demo-seed', ip: null };

/** A room whose members are the given attendees, as they were during the replayed meeting. */
class ReplayRoom extends BoardRoom {
  constructor(private readonly attendees: PresentMember[]) {
    super();
  }

  override async membersInRoom(): Promise<PresentMember[]> {
    return this.attendees;
  }

  override async socketsOf(_meetingId: string, userId: string): Promise<number> {
    return this.attendees.some((member) => member.userId === userId) ? 1 : 0;
  }
}

/** Seeds the meetings once; a second run finds a meeting and changes nothing. */
export async function seedDemoMeetings(em: EntityManager, now = new Date()): Promise<boolean> {
  if (await em.count(Meeting, {})) return false;
  const north = await em.findOneOrFail(Board, { name: 'North Liver Board' });
  north.requiredSpecialties = ['hepatology', 'diagnostic-radiology', 'interventional-radiology'];
  const userOf = async (email: string): Promise<SignedInUser> => {
    const found = await em.findOneOrFail(User, { email });
    const signedIn = await loadSignedInUser(em, found.id, 'local');
    if (!signedIn) throw new Error(`${email} is not an active demo user`);
    return signedIn;
  };
  const presenter = await userOf('presenter@emberline.test');
  const member = await userOf('member@emberline.test');
  const chair = await userOf('proceduralist@emberline.test');

  // A second case for the upcoming agenda: a metastasis, ready for board.
  const secondCase = new ClinicalCase({
    caseCode: 'NLB-2026-027',
    board: em.getReference(Board, north.id, { wrapped: true }),
    presenter: em.getReference(User, presenter.id, { wrapped: true }),
    yearOfBirth: 1958,
    sex: 'male',
    primaryDiagnosis: 'crlm',
  });
  secondCase.status = 'ready-for-board';
  secondCase.ecogPerformanceStatus = 0;
  secondCase.hasVascularInvasion = false;
  secondCase.hasExtrahepaticSpread = false;
  em.persist(secondCase);
  const secondRef = em.getReference(ClinicalCase, secondCase.id, { wrapped: true });
  em.persist(new Lesion(secondRef, 'VII', 21, 'metastasis'));
  em.persist(
    new LabPanel(secondRef, em.getReference(User, presenter.id, { wrapped: true }), {
      takenAt: new Date(now.getTime() - 2 * 86_400_000),
      bilirubin: { value: 0.7, unit: 'mg/dL' },
      albumin: { value: 4.2, unit: 'g/dL' },
      inr: 1.0,
      creatinine: { value: 0.9, unit: 'mg/dL' },
      sodiumMmolL: 140,
      plateletsE9L: 210,
      ascites: 'none',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
    }),
  );
  await em.flush();

  // The upcoming meeting, two days ahead at 16:00 UTC, with both cases on its agenda.
  const upcomingAt = new Date(now.getTime() + 2 * 86_400_000);
  upcomingAt.setUTCHours(16, 0, 0, 0);
  const meetings = new MeetingService(em);
  const upcoming = await meetings.schedule(chair, seedActor, north.id, {
    startsAt: upcomingAt.toISOString(),
    durationMin: 90,
    chairId: chair.id,
    place: 'Room 4.12, North site, and the board’s video link',
  });
  const northReady = await em.findOneOrFail(ClinicalCase, { caseCode: 'NLB-2026-014' });
  await meetings.addToAgenda(presenter, seedActor, upcoming.id, northReady.id);
  await meetings.addToAgenda(presenter, seedActor, upcoming.id, secondCase.id);

  // The meeting held earlier today, replayed: attendance, votes, a comment, the decision.
  const heldAt = new Date(now.getTime() - 50 * 60_000);
  const held = new Meeting({
    board: em.getReference(Board, north.id, { wrapped: true }),
    startsAt: heldAt,
    durationMin: 60,
    chair: em.getReference(User, chair.id, { wrapped: true }),
    scheduledBy: em.getReference(User, chair.id, { wrapped: true }),
  });
  held.place = 'Room 4.12, North site';
  held.state = 'in-session';
  held.openedAt = new Date(heldAt.getTime() + 60_000);
  held.lead = em.getReference(User, presenter.id, { wrapped: true });
  em.persist(held);
  const decidedCase = await em.findOneOrFail(ClinicalCase, { caseCode: 'NLB-2026-022' });
  // Decided in that meeting: it was on its agenda until the decision was signed.
  decidedCase.status = 'on-agenda';
  const item = new AgendaItem({
    meeting: em.getReference(Meeting, held.id, { wrapped: true }),
    clinicalCase: em.getReference(ClinicalCase, decidedCase.id, { wrapped: true }),
    position: 1,
    addedBy: em.getReference(User, presenter.id, { wrapped: true }),
  });
  em.persist(item);
  const attendees: PresentMember[] = [presenter, member, chair].map((user) => {
    const specialty = user.memberships.get(north.id);
    if (!specialty) throw new Error(`${user.email} is not a North member`);
    const visit = new Attendance({
      meeting: em.getReference(Meeting, held.id, { wrapped: true }),
      user: em.getReference(User, user.id, { wrapped: true }),
      specialty,
    });
    visit.joinedAt = new Date(heldAt.getTime() + 60_000);
    em.persist(visit);
    return { userId: user.id, displayName: user.displayName, specialty, isInRoom: true };
  });
  await em.flush();

  const room = new ReplayRoom(attendees);
  const votes = new VoteService(em, room);
  for (const voter of [presenter, member, chair]) {
    await votes.cast(voter, seedActor, item.id, { option: 'tace', position: 'support' });
  }
  await votes.cast(member, seedActor, item.id, {
    option: 'ablation-mw',
    position: 'oppose',
    comment: 'At 31 mm in segment VIII under the dome, the margin would be hard to secure.',
  });
  const comment = await new CommentService(em, room).post(chair, seedActor, item.id, {
    body: 'Child-Pugh B with a 31 mm lesion: the board favours TACE; reassess by CT after two sessions.',
  });
  await new CommentService(em, room).mark(chair, seedActor, comment.id, true);
  await new DecisionService(em, room).record(
    chair,
    seedActor,
    decidedCase.id,
    {
      outcome: 'tace',
      rationale:
        'Single 31 mm HCC in segment VIII with Child-Pugh B liver function; the subdiaphragmatic position makes a safe ablation margin unlikely.',
      conditions:
        'Contrast CT four weeks after the second session; return to the board if residual.',
      password: demoPassword,
    },
    { password: demoPassword, signedInAt: now.getTime() },
  );
  await new MinutesService(em, room).close(chair, seedActor, held.id);
  return true;
}
