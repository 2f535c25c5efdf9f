// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, fireEvent, render, screen } from '@testing-library/react';
import { useState } from 'react';
import { LoadDial, dialKeyValue, dialValueAt, dialValueText } from '../../src/features/bench/components/load-dial.tsx';

afterEach(cleanup);

function Harness({ start = 0.5, hot = false, tripped = false }: { start?: number; hot?: boolean; tripped?: boolean }) {
  const [v, setV] = useState(start);
  return <LoadDial value01={v} onChange={setV} pileA={v * 400} pileTempC={hot ? 300 : 40} warnC={250} tripC={400} hot={hot} tripped={tripped} />;
}

const dial = () => screen.getByRole('slider', { name: 'Carbon pile load' });

describe('the carbon-pile dial', () => {
  it('is a slider with an accessible name, range and a spoken value', () => {
    render(<Harness start={0.25} />);
    const d = dial();
    expect(d.getAttribute('tabindex')).toBe('0');
    expect(d.getAttribute('aria-valuemin')).toBe('0');
    expect(d.getAttribute('aria-valuemax')).toBe('100');
    expect(d.getAttribute('aria-valuenow')).toBe('25');
    expect(d.getAttribute('aria-valuetext')).toBe('25 percent, pile drawing 100 amps');
  });

  it('moves 1 % per arrow key, 10 % per page key, and to the ends with Home and End', () => {
    render(<Harness start={0.5} />);
    const d = dial();
    fireEvent.keyDown(d, { key: 'ArrowUp' });
    expect(d.getAttribute('aria-valuenow')).toBe('51');
    fireEvent.keyDown(d, { key: 'ArrowLeft' });
    fireEvent.keyDown(d, { key: 'ArrowDown' });
    expect(d.getAttribute('aria-valuenow')).toBe('49');
    fireEvent.keyDown(d, { key: 'PageUp' });
    expect(d.getAttribute('aria-valuenow')).toBe('59');
    fireEvent.keyDown(d, { key: 'PageDown' });
    fireEvent.keyDown(d, { key: 'PageDown' });
    expect(d.getAttribute('aria-valuenow')).toBe('39');
    fireEvent.keyDown(d, { key: 'End' });
    expect(d.getAttribute('aria-valuenow')).toBe('100');
    fireEvent.keyDown(d, { key: 'ArrowUp' });
    expect(d.getAttribute('aria-valuenow')).toBe('100');
    fireEvent.keyDown(d, { key: 'Home' });
    expect(d.getAttribute('aria-valuenow')).toBe('0');
    fireEvent.keyDown(d, { key: 'ArrowDown' });
    expect(d.getAttribute('aria-valuenow')).toBe('0');
  });

  it('counts every key press when the value shown lags behind (presses faster than the display’s frames)', () => {
    // The bench shows a turn on its next frame; until then the dial's value is the old one.
    const sent: number[] = [];
    render(<LoadDial value01={0.3} onChange={(v) => sent.push(v)} pileA={0} pileTempC={40} warnC={250} tripC={400} hot={false} tripped={false} />);
    fireEvent.keyDown(dial(), { key: 'PageUp' });
    fireEvent.keyDown(dial(), { key: 'PageUp' });
    fireEvent.keyDown(dial(), { key: 'ArrowDown' });
    fireEvent.wheel(dial(), { deltaY: -100 });
    expect(sent.map((v) => Math.round(v * 100))).toEqual([40, 50, 49, 50]);
  });

  it('steps from the value shown once the bench shows a new one', () => {
    const sent: number[] = [];
    const props = { onChange: (v: number) => sent.push(v), pileA: 0, pileTempC: 40, warnC: 250, tripC: 400, hot: false, tripped: false };
    const { rerender } = render(<LoadDial value01={0.3} {...props} />);
    fireEvent.keyDown(dial(), { key: 'PageUp' });
    rerender(<LoadDial value01={0.7} {...props} />);
    fireEvent.keyDown(dial(), { key: 'PageUp' });
    expect(sent.map((v) => Math.round(v * 100))).toEqual([40, 80]);
  });

  it('ignores keys it does not use', () => {
    render(<Harness start={0.3} />);
    fireEvent.keyDown(dial(), { key: 'a' });
    fireEvent.keyDown(dial(), { key: 'Tab' });
    expect(dial().getAttribute('aria-valuenow')).toBe('30');
  });

  it('turns with the mouse wheel', () => {
    render(<Harness start={0.3} />);
    fireEvent.wheel(dial(), { deltaY: -100 });
    expect(dial().getAttribute('aria-valuenow')).toBe('31');
    fireEvent.wheel(dial(), { deltaY: 100 });
    fireEvent.wheel(dial(), { deltaY: 100 });
    expect(dial().getAttribute('aria-valuenow')).toBe('29');
  });

  it('says when the pile is hot and when it has cut out', () => {
    const { rerender } = render(<Harness start={0.4} hot />);
    expect(dial().getAttribute('aria-valuetext')).toMatch(/pile hot$/);
    rerender(<Harness start={0.4} hot tripped />);
    expect(dial().getAttribute('aria-valuetext')).toMatch(/cut out: overheated$/);
  });
});

describe('dial geometry', () => {
  it('maps the pointer angle over a 270° sweep starting at 7:30', () => {
    expect(dialValueAt(0, -1)).toBeCloseTo(0.5, 6);
    expect(dialValueAt(-1, 1)).toBeCloseTo(0, 6);
    expect(dialValueAt(1, 1)).toBeCloseTo(1, 6);
    expect(dialValueAt(1, 0)).toBeCloseTo(5 / 6, 6);
    // Straight down is in the dead zone: it clamps to an end, never wraps.
    expect([0, 1]).toContain(dialValueAt(0, 1));
  });

  it('computes key steps without leaving 0..1', () => {
    expect(dialKeyValue('PageUp', 0.95)).toBe(1);
    expect(dialKeyValue('PageDown', 0.05)).toBe(0);
    expect(dialKeyValue('Enter', 0.5)).toBeNull();
    expect(dialValueText(1, 612.4, false, false)).toBe('100 percent, pile drawing 612 amps');
  });
});
