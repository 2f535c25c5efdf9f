import type { CurveExcess } from '../../sim/instruments.ts';

const rpm = (n: number) => Math.round(n).toLocaleString('en-US');

/**
 * The instructor's explanation under an output-curve chart whose faulted
 * curve lies above the healthy one somewhere (see faultedCurveExcess).
 */
export function CurveExcessNote({ excess }: { excess: CurveExcess | null }) {
  if (excess === null) return null;
  return (
    <p className="mt-2 text-xs text-slate-600" role="note" data-testid="curve-excess-note">
      From {rpm(excess.fromAltRpm)} to {rpm(excess.toAltRpm)} alternator rpm the faulted curve lies above the healthy one (by up to{' '}
      {excess.mostA.toFixed(0)} A, cold). That is what the circuit does with a diode open: the phase that lost its diode can carry current
      only one way, so it carries a standing DC current, and the stator&apos;s reactance, which caps a healthy unit&apos;s output at speed,
      does not hold DC back. The unit pays for it in heat: that phase&apos;s copper loss rises, so under a long load it runs hotter than a
      healthy unit and its output falls back. A dead diode lowers output most at idle; at any speed the ripple at the electrical frequency
      gives it away.
    </p>
  );
}
