import pino from 'pino';

export function createLogger(level = process.env.LOG_LEVEL ?? 'info') {
  return pino({ level, base: { app: 'bleedwright' } });
}

export type Logger = ReturnType<typeof createLogger>;
