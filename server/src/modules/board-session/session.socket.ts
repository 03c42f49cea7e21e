/**
 * The live room of a meeting: `session:join`, `session:leave`, `view:update`, `view:hand-over`,
 * and what a disconnect or a recovered connection means for presence and attendance.
 */
import type { MikroORM } from '@mikro-orm/postgresql';
import { z } from 'zod';
import {
  handOverSchema,
  joinSessionSchema,
  viewStateSchema,
  type ViewStateEvent,
} from '@emberline/shared';
import { ConflictError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { Meeting } from '../meetings/meeting.entity';
import { loadSignedInUser } from '../users/user.service';
import { meetingRoom } from './board-room';
import { presenceOf } from './presence';
import {
  onSessionEvent,
  type SessionContext,
  type SessionFeature,
  type SessionSocket,
} from './session-events';
import { SessionService } from './session.service';
import { ViewRelay } from './view-relay';

const leaveSchema = z.strictObject({ meetingId: z.uuid() });
const viewUpdateSchema = z.strictObject({ meetingId: z.uuid(), state: viewStateSchema });
const handOverEventSchema = handOverSchema.extend({ meetingId: z.uuid() });

function actorOfSocket(socket: SessionSocket, user: SignedInUser): Actor {
  return { id: user.id, email: user.email, ip: socket.handshake.address ?? null };
}

export interface SessionFeatureHandle {
  feature: SessionFeature;
  /** Writes any view waiting to be stored and stops the timers. */
  close(): Promise<void>;
}

export function sessionFeature(orm: MikroORM): SessionFeatureHandle {
  // The lead of each meeting as last read, at most a second old: the lead's updates come 20
  // times a second, and a hand-over on this process clears it at once.
  const leads: LeadCache = new Map();
  let relay: ViewRelay | null = null;
  const relayOf = (context: SessionContext): ViewRelay =>
    (relay ??= new ViewRelay(
      (event) => context.room.toMeetingVolatile(event.meetingId).emit('view:state', event),
      (event) =>
        new SessionService(orm.em.fork(), context.room).storeView(
          event.meetingId,
          event.state,
          event.sequence,
        ),
      context.log,
    ));

  /** The view a joiner starts from: this process's latest, or the stored one. */
  const viewOf = (meeting: Meeting, context: SessionContext): ViewStateEvent => {
    const latest = relayOf(context).latest(meeting.id);
    if (latest && latest.sequence >= meeting.viewSequence) {
      return { ...latest, leadUserId: meeting.lead?.id ?? null };
    }
    return {
      meetingId: meeting.id,
      state: meeting.viewState ?? {
        agendaItemId: null,
        seriesId: null,
        slice: null,
        window: null,
        camera: null,
      },
      leadUserId: meeting.lead?.id ?? null,
      sequence: meeting.viewSequence,
    };
  };

  const leaveMeeting = async (
    socket: SessionSocket,
    context: SessionContext,
    meetingId: string,
  ) => {
    await socket.leave(meetingRoom(meetingId));
    if (socket.data.meetingId === meetingId) socket.data.meetingId = null;
    const em = orm.em.fork();
    await new SessionService(em, context.room).depart(socket.data.userId, meetingId);
    context.room
      .toMeeting(meetingId)
      .emit('presence', await presenceOf(em, context.room, meetingId));
  };

  const feature: SessionFeature = (socket, context) => {
    onSessionEvent(
      socket,
      context,
      'session:join',
      joinSessionSchema,
      async ({ meetingId }, user) => {
        const em = orm.em.fork();
        const service = new SessionService(em, context.room);
        const meeting = await service.findJoinable(user, meetingId);
        const previous = socket.data.meetingId;
        if (previous && previous !== meetingId) await leaveMeeting(socket, context, previous);
        socket.data.displayName = user.displayName;
        socket.data.specialties = Object.fromEntries(user.memberships);
        socket.data.meetingId = meetingId;
        await socket.join(meetingRoom(meetingId));
        const wasScheduled = meeting.state === 'scheduled';
        await service.arrive(user, actorOfSocket(socket, user), meeting);
        const snapshot = await service.snapshot(user, meetingId, viewOf(meeting, context));
        context.room.toMeeting(meetingId).emit('presence', snapshot.presence);
        if (wasScheduled && meeting.state === 'in-session') {
          context.room.toMeeting(meetingId).emit('agenda:changed', { meetingId, reason: 'opened' });
        }
        return snapshot;
      },
    );

    onSessionEvent(socket, context, 'session:leave', leaveSchema, async ({ meetingId }, user) => {
      // Only a member of the board has a room to leave (a closed meeting's too). Anyone else hears
      // what joining would tell them, and the room hears nothing of them: otherwise an answer
      // that differs between an existing and a missing meeting would tell another board's
      // member which meetings exist.
      await new SessionService(orm.em.fork(), context.room).findOfMember(user, meetingId);
      await leaveMeeting(socket, context, meetingId);
      return null;
    });

    onSessionEvent(
      socket,
      context,
      'view:update',
      viewUpdateSchema,
      async ({ meetingId, state }, user) => {
        if (socket.data.meetingId !== meetingId) {
          // Who may not be in the room hears so first (404 off the board, 403 an
          // administrator), as for any record: "join first" is for those who may.
          await new SessionService(orm.em.fork(), context.room).findJoinable(user, meetingId);
          throw new ConflictError('Join the meeting before leading its view.');
        }
        const meeting = await leadCheck(leads, orm, context, user, meetingId);
        const sequence = relayOf(context).update(meetingId, state, user.id, meeting.viewSequence);
        return { sequence };
      },
      { user: 'recent' },
    );

    onSessionEvent(
      socket,
      context,
      'view:hand-over',
      handOverEventSchema,
      async ({ meetingId, userId }, user) => {
        await relayOf(context).flush(meetingId);
        const em = orm.em.fork();
        const presence = await new SessionService(em, context.room).handOver(
          user,
          actorOfSocket(socket, user),
          meetingId,
          userId,
        );
        leads.delete(meetingId);
        const meeting = await em.findOneOrFail(Meeting, meetingId);
        const view = viewOf(meeting, context);
        context.room.toMeeting(meetingId).emit('presence', presence);
        context.room.toMeeting(meetingId).emit('view:state', view);
        return presence;
      },
    );

    socket.on('disconnect', () => {
      const meetingId = socket.data.meetingId;
      if (!meetingId) return;
      leaveMeeting(socket, context, meetingId).catch((error: unknown) =>
        context.log('Leaving the board session failed.', error),
      );
    });

    if (socket.recovered && socket.data.meetingId) {
      void rejoinRecovered(orm, socket, context, socket.data.meetingId);
    }
  };

  return {
    feature,
    async close() {
      await relay?.close();
    },
  };
}

type LeadCache = Map<string, { userId: string; meeting: Promise<Meeting>; at: number }>;

/**
 * The reading is shared while it runs: the updates that come meanwhile wait for it rather than
 * each asking the database, which at 20 a second would otherwise ask ever more often the slower
 * the database answers (and so fall ever further behind). A refusal is not kept: the entry
 * before it comes back.
 */
function leadCheck(
  leads: LeadCache,
  orm: MikroORM,
  context: SessionContext,
  user: SignedInUser,
  meetingId: string,
): Promise<Meeting> {
  const cached = leads.get(meetingId);
  if (cached && cached.userId === user.id && Date.now() - cached.at < 1000) {
    return cached.meeting;
  }
  const meeting = new SessionService(orm.em.fork(), context.room).assertLead(user, meetingId);
  const entry = { userId: user.id, meeting, at: Date.now() };
  leads.set(meetingId, entry);
  meeting.catch(() => {
    // The lead's own reading stays, however often someone else is refused.
    if (leads.get(meetingId) !== entry) return;
    if (cached) leads.set(meetingId, cached);
    else leads.delete(meetingId);
  });
  return meeting;
}

/**
 * A recovered connection keeps its rooms; it is re-authorised before it hears any more: a member
 * who lost the membership while away leaves the room, one who kept it is counted present again.
 */
async function rejoinRecovered(
  orm: MikroORM,
  socket: SessionSocket,
  context: SessionContext,
  meetingId: string,
): Promise<void> {
  try {
    const em = orm.em.fork();
    const user = await loadSignedInUser(em, socket.data.userId, socket.data.signInMethod);
    const service = new SessionService(em, context.room);
    const meeting = user ? await service.findJoinable(user, meetingId).catch(() => null) : null;
    if (!user || !meeting) {
      await socket.leave(meetingRoom(meetingId));
      socket.data.meetingId = null;
      if (!user) socket.disconnect(true);
      return;
    }
    socket.data.specialties = Object.fromEntries(user.memberships);
    await service.arrive(user, actorOfSocket(socket, user), meeting);
    context.room
      .toMeeting(meetingId)
      .emit('presence', await presenceOf(em, context.room, meetingId));
  } catch (error) {
    context.log('Re-authorising a recovered session socket failed.', error);
    socket.disconnect(true);
  }
}
