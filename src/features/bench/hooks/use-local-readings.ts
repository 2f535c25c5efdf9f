/** The readings a student has recorded, kept in this browser per attempt until submission. */
import { useCallback, useEffect, useState } from 'react';
import type { LocalReading } from '../components/reading-capture.ts';

const key = (attemptId: number) => `loadline.readings.${attemptId}`;

function load(attemptId: number): LocalReading[] {
  try {
    const raw = window.localStorage.getItem(key(attemptId));
    const data: unknown = raw ? JSON.parse(raw) : [];
    return Array.isArray(data) ? (data as LocalReading[]) : [];
  } catch {
    return [];
  }
}

export function useLocalReadings(attemptId: number) {
  const [readings, setReadings] = useState<LocalReading[]>(() => load(attemptId));
  useEffect(() => {
    try {
      window.localStorage.setItem(key(attemptId), JSON.stringify(readings));
    } catch {
      // Storage full or blocked: the readings stay in memory.
    }
  }, [attemptId, readings]);
  const add = useCallback((r: LocalReading) => setReadings((xs) => [...xs, r]), []);
  const remove = useCallback((id: string) => setReadings((xs) => xs.filter((r) => r.id !== id)), []);
  const clear = useCallback(() => {
    window.localStorage.removeItem(key(attemptId));
    setReadings([]);
  }, [attemptId]);
  return { readings, add, remove, clear };
}
