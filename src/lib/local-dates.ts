/** Date-time inputs show local time; payloads carry ISO instants. */
const pad = (n: number) => String(n).padStart(2, '0');

export const localValue = (d: Date) => `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}T${pad(d.getHours())}:${pad(d.getMinutes())}`;

export const localToIso = (v: string) => {
  const t = Date.parse(v);
  return Number.isNaN(t) ? v : new Date(t).toISOString();
};

export const when = (iso: string) => new Date(iso).toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' });
