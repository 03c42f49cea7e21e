/** Types of postgres.mjs for the TypeScript callers (test set-up). */
export interface ClusterState {
  port: number;
  dataDir: string;
  password: string;
  user: string;
  /** Whether the call that answered this started the server (it was not running). */
  isStartedHere?: boolean;
}
export function startPostgres(): ClusterState;
export function stopPostgres(): void;
export function connectionUrl(database?: string, state?: ClusterState | null): string;
export function ensureDatabase(name: string, state?: ClusterState | null): Promise<void>;
export function dropDatabase(name: string, state?: ClusterState | null): Promise<void>;
