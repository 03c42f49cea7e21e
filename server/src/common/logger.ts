/**
 * One-line JSON logs to stderr. Callers pass ids and reasons only, never patient values; errors
 * are logged by name, message and stack frames, except database errors (below).
 */
function write(level: 'info' | 'warn' | 'error', message: string, error?: unknown): void {
  const line: Record<string, unknown> = { at: new Date().toISOString(), level, message };
  if (error !== undefined) line.error = describeError(error);
  process.stderr.write(JSON.stringify(line) + '\n');
}

/** The fields of a PostgreSQL error that name what failed without quoting any value. */
const databaseFields = ['code', 'constraint', 'table', 'column', 'routine', 'severity'] as const;

/**
 * What a log line may say of an error. A database error's message and detail quote the SQL's
 * values and the rows' keys (an e-mail in a duplicate key, a lab value in a cast), and the ORM
 * prepends the whole statement with its parameters; so a database error is logged by its
 * SQLSTATE code (PostgreSQL manual, appendix A), constraint, table and column, and the stack's
 * frames only, never its message. Any other error keeps its message.
 */
export function describeError(error: unknown): Record<string, unknown> | string {
  if (!(error instanceof Error)) return String(error);
  const frames = (error.stack ?? '')
    .split('\n')
    .filter((line) => line.startsWith('    at '))
    .join('\n');
  const database = databaseErrorOf(error);
  if (!database) return { name: error.name, message: error.message, stack: frames };
  const described: Record<string, unknown> = { name: error.name, stack: frames };
  for (const field of databaseFields) {
    const value = database[field];
    if (typeof value === 'string' && value) described[field] = value;
  }
  return described;
}

/**
 * The PostgreSQL error behind `error`: the driver's own (pg's DatabaseError: a five-character
 * SQLSTATE `code` and `routine`), or the one an ORM exception wraps (`previous`, `cause`).
 */
function databaseErrorOf(error: Error): Record<string, unknown> | null {
  const seen = new Set<unknown>();
  let candidate: unknown = error;
  while (candidate instanceof Error && !seen.has(candidate)) {
    seen.add(candidate);
    const fields = candidate as unknown as Record<string, unknown>;
    if (typeof fields.code === 'string' && /^[0-9A-Z]{5}$/.test(fields.code) && 'routine' in fields)
      return fields;
    if (typeof fields.sqlState === 'string') return { ...fields, code: fields.sqlState };
    candidate = fields.previous ?? fields.cause;
  }
  return null;
}

export const logger = {
  info: (message: string) => write('info', message),
  warn: (message: string, error?: unknown) => write('warn', message, error),
  error: (message: string, error?: unknown) => write('error', message, error),
};
