import pino from 'pino';
import type { AppContext } from './context.ts';

export function makeLogger(level: 'info' | 'warn' | 'error' | 'silent' = 'info'): AppContext['log'] {
  const logger = pino({ level, base: undefined });
  return (lvl, message, extra) => {
    if (extra instanceof Error) logger[lvl]({ err: extra }, message);
    else if (extra !== undefined) logger[lvl]({ extra }, message);
    else logger[lvl](message);
  };
}
