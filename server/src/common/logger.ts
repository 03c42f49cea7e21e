/**
 * One-line logs to stderr. Callers pass ids and reasons only, never patient values; errors are
 * logged by name, message and stack, which carry no request data.
 */
function write(level: 'info' | 'warn' | 'error', message: string, error?: unknown): void {
  const line: Record<string, unknown> = { at: new Date().toISOString(), level, message };
  if (error instanceof Error)
    line.error = { name: error.name, message: error.message, stack: error.stack };
  else if (error !== undefined) line.error = String(error);
  process.stderr.write(JSON.stringify(line) + '\n');
}

export const logger = {
  info: (message: string) => write('info', message),
  warn: (message: string, error?: unknown) => write('warn', message, error),
  error: (message: string, error?: unknown) => write('error', message, error),
};
