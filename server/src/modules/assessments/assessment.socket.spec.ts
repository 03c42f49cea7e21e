import { describe, expect, it } from 'vitest';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { EmberlineSocket } from '../../realtime/io';
import { assessmentSocketFeature } from './assessment.socket';

type Handler = (payload: unknown, acknowledge: (answer: unknown) => void) => Promise<void> | void;

/** A socket that only records the handlers a feature registers. */
function recordingSocket() {
  const handlers = new Map<string, Handler>();
  const socket = {
    on(event: string, handler: Handler) {
      handlers.set(event, handler);
      return socket;
    },
    join: () => Promise.resolve(),
    leave: () => Promise.resolve(),
    disconnect: () => socket,
  };
  return { socket: socket as unknown as EmberlineSocket, handlers };
}

describe('assessment:watch', () => {
  it('answers a database error while reading the user, logs it, and throws nothing', async () => {
    const logged: string[] = [];
    const { socket, handlers } = recordingSocket();
    assessmentSocketFeature({} as MikroORM, (message) => logged.push(message))(socket, () =>
      Promise.reject(new Error('terminating connection due to administrator command')),
    );
    const answers: unknown[] = [];
    await handlers.get('assessment:watch')?.(
      { assessmentId: '5b1f1f4e-7d0a-4c37-9a43-2f3b0c4a9e11' },
      (answer) => answers.push(answer),
    );
    expect(answers).toEqual([
      { ok: false, status: 500, detail: 'The assessment could not be read.' },
    ]);
    expect(logged).toEqual(['assessment:watch failed.']);
  });

  it('refuses a payload that is not { assessmentId } with 400', async () => {
    const { socket, handlers } = recordingSocket();
    assessmentSocketFeature({} as MikroORM, () => undefined)(socket, () => Promise.resolve(null));
    const answers: unknown[] = [];
    await handlers.get('assessment:watch')?.({ assessmentId: 12 }, (answer) =>
      answers.push(answer),
    );
    expect(answers).toMatchObject([{ ok: false, status: 400 }]);
  });
});
