// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { act, cleanup, fireEvent, render, screen } from '@testing-library/react';
import { defaultVehicleParams } from '../../sim/params.ts';
import { createBenchEngine, type BenchEngine } from '../../src/features/bench/stores/bench-engine.ts';
import { BenchEngineContext } from '../../src/features/bench/hooks/use-bench.ts';
import { AccessorySwitches, KeySwitch, RpmControl, rpmKeyValue } from '../../src/features/bench/components/engine-controls.tsx';
import { HookupPanel } from '../../src/features/bench/components/hookup-panel.tsx';
import { PileControl } from '../../src/features/bench/components/pile-control.tsx';

afterEach(cleanup);

const params = defaultVehicleParams();

function mount(children: React.ReactNode): BenchEngine {
  const engine = createBenchEngine({ params, seed: 3 });
  render(<BenchEngineContext.Provider value={engine}>{children}</BenchEngineContext.Provider>);
  return engine;
}

describe('bench controls send their inputs through the one dispatcher', () => {
  it('the assistant’s rpm is a keyboard slider from idle to 3,000', () => {
    const engine = mount(<RpmControl idleRpm={750} maxRpm={3000} />);
    const slider = screen.getByRole('slider', { name: 'Assistant holds' });
    expect(slider.getAttribute('aria-valuenow')).toBe('750');
    expect(slider.getAttribute('aria-valuetext')).toBe('idle, 750 rpm');
    act(() => void fireEvent.keyDown(slider, { key: 'PageUp' }));
    expect(slider.getAttribute('aria-valuenow')).toBe('1250');
    act(() => void fireEvent.keyDown(slider, { key: 'ArrowRight' }));
    expect(slider.getAttribute('aria-valuetext')).toBe('1300 rpm held');
    act(() => void fireEvent.keyDown(slider, { key: 'End' }));
    expect(slider.getAttribute('aria-valuenow')).toBe('3000');
    act(() => void fireEvent.keyDown(slider, { key: 'Home' }));
    expect(slider.getAttribute('aria-valuenow')).toBe('750');
    act(() => void fireEvent.click(screen.getByRole('button', { name: '2,000' })));
    expect(engine.getSnapshot().controls.heldRpm).toBe(2000);
    expect(engine.studentEvents().map((e) => (e.kind === 'rpm' ? e.rpm : null))).toEqual([1250, 1300, 3000, 0, 2000]);
  });

  it('computes held speeds inside idle..max', () => {
    expect(rpmKeyValue('ArrowDown', 0, 750, 3000)).toBe(750);
    expect(rpmKeyValue('PageUp', 2800, 750, 3000)).toBe(3000);
    expect(rpmKeyValue('x', 1000, 750, 3000)).toBeNull();
  });

  it('the key and the accessory switches say whether they are on', () => {
    const engine = mount(
      <>
        <KeySwitch />
        <AccessorySwitches accessories={params.loads.accessories} />
      </>,
    );
    act(() => void fireEvent.click(screen.getByRole('button', { name: 'Key on' })));
    expect(screen.getByRole('button', { name: 'Key on' }).getAttribute('aria-pressed')).toBe('true');
    expect(screen.getByRole('button', { name: 'Key off' }).getAttribute('aria-pressed')).toBe('false');
    act(() => void fireEvent.click(screen.getByRole('button', { name: 'Headlamps (low beam)' })));
    expect(screen.getByRole('button', { name: 'Headlamps (low beam)' }).getAttribute('aria-pressed')).toBe('true');
    expect(engine.getSnapshot().controls.accessoriesOn).toEqual(['headlamps']);
  });

  it('the hook-up panel mirrors the drawing from the keyboard, clamp arrow included', () => {
    const engine = mount(<HookupPanel />);
    act(() => void fireEvent.change(screen.getByLabelText('Red lead'), { target: { value: 'alt-bplus' } }));
    act(() => void fireEvent.change(screen.getByLabelText('Inductive clamp'), { target: { value: 'bplus-cable' } }));
    act(() => void fireEvent.click(screen.getByRole('button', { name: 'Reverse clamp' })));
    const c = engine.getSnapshot().controls;
    expect(c.leads.red).toBe('alt-bplus');
    expect(c.clamp).toEqual({ conductor: 'bplus-cable', arrow: 'toward-alternator' });
    expect(screen.getByTestId('clamp-arrow').textContent).toMatch(/toward the alternator/);
    act(() => void fireEvent.click(screen.getByRole('button', { name: 'Fit series ammeter at battery −' })));
    expect(engine.getSnapshot().controls.ammeterInSeries).toBe(true);
  });

  it('the pile dial sends one event per step it moves, never for motion finer than a step', () => {
    const engine = mount(<PileControl pile={params.pile} />);
    const dial = screen.getByRole('slider', { name: 'Carbon pile load' });
    act(() => void fireEvent.keyDown(dial, { key: 'PageUp' }));
    act(() => void fireEvent.keyDown(dial, { key: 'ArrowUp' }));
    expect(engine.studentEvents().map((e) => (e.kind === 'pile' ? e.dial01 : null))).toEqual([0.1, 0.11]);
    expect(dial.getAttribute('aria-valuenow')).toBe('11');
    act(() => void fireEvent.click(screen.getByRole('button', { name: 'Load off' })));
    expect(engine.getSnapshot().controls.pileDial01).toBe(0);
  });
});
