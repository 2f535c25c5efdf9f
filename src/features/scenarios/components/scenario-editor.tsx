import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useMemo, useState } from 'react';
import { FormProvider, get, useForm, useWatch, type FieldPath } from 'react-hook-form';
import type { Fault } from '../../../../sim/faults.ts';
import type { Visibility } from '../../../../shared/api/scenarios.ts';
import {
  DIFFICULTIES,
  DIFFICULTY_LABELS,
  MAX_HINT_POINTS,
  outputPassMarkA,
  scenarioSchema,
  vehicleParamsSchema,
  VEHICLE_KINDS,
  type ScenarioDefinition,
} from '../../../../shared/scenario.ts';
import { ApiError } from '../../../lib/api-client.ts';
import { Button } from '../../../components/ui/button.tsx';
import { FieldShell, SelectField, TextField } from '../../../components/ui/field.tsx';
import { Panel } from '../../../components/ui/states.tsx';
import { FaultsSection } from './editor-faults.tsx';
import { AccessoriesField, DiagnosisChoicesSection, LinesField, TestsAndRulesSection } from './editor-rules.tsx';
import { OutputCurvePreview } from './output-curve-preview.tsx';
import { Advanced, BoundedNumberField, FieldGrid, ParamField, type ScenarioFormValues } from './param-field.tsx';
import { NameplateCheck, VehicleChecksPanel } from './vehicle-checks.tsx';

export interface ScenarioSaveRequest {
  definition: ScenarioDefinition;
  note: string;
  visibility: Visibility;
}

const SECTIONS = [
  ['scenario', 'Scenario'],
  ['vehicle', 'Vehicle'],
  ['battery', 'Battery'],
  ['alternator', 'Alternator and regulator'],
  ['wiring', 'Wiring'],
  ['loads', 'Loads'],
  ['faults', 'Faults'],
  ['rules', 'Tests and pass rules'],
  ['choices', 'Diagnosis choices'],
  ['hints', 'Hints and objectives'],
] as const;

function Section({ id, title, children }: { id: string; title: string; children: React.ReactNode }) {
  return (
    <Panel className="scroll-mt-20" title={<span id={`section-${id}`}>{title}</span>}>
      <div aria-labelledby={`section-${id}`}>{children}</div>
    </Panel>
  );
}

function Preview() {
  const values = useWatch<ScenarioFormValues>();
  const parsed = vehicleParamsSchema.safeParse(values.vehicle?.params);
  const faults = useMemo(() => ((values.faults ?? []) as Fault[]).filter((f) => f && typeof f.severity01 === 'number' && !Number.isNaN(f.severity01)), [values.faults]);
  const params = parsed.success ? parsed.data : null;
  const rule = values.passRules?.output;
  const rated = params?.alternator.ratedCurrentA ?? 0;
  const passMark =
    rule?.mode === 'within-amps' && typeof rule.amps === 'number'
      ? outputPassMarkA({ mode: 'within-amps', amps: rule.amps }, rated)
      : outputPassMarkA({ mode: 'percent-of-rating', percent: rule && 'percent' in rule && typeof rule.percent === 'number' ? rule.percent : 90 }, rated);
  // Keep a stable identity while the parameters are unchanged, so the model does not rerun on every keystroke elsewhere.
  const key = JSON.stringify(params);
  const stableParams = useMemo(() => (key === 'null' ? null : (JSON.parse(key) as NonNullable<typeof params>)), [key]);
  const faultKey = JSON.stringify(faults);
  const stableFaults = useMemo(() => JSON.parse(faultKey) as Fault[], [faultKey]);
  return <OutputCurvePreview params={stableParams} faults={stableFaults} passMarkA={passMark} />;
}

export function ScenarioEditor({
  initial,
  mode,
  readOnly,
  saving,
  saveError,
  onSave,
}: {
  initial: ScenarioDefinition;
  mode: 'create' | 'edit';
  readOnly: boolean;
  saving: boolean;
  saveError: unknown;
  onSave: (req: ScenarioSaveRequest) => void;
}) {
  const form = useForm<ScenarioFormValues, unknown, ScenarioDefinition>({ resolver: zodResolver(scenarioSchema), defaultValues: initial, mode: 'onTouched' });
  const [note, setNote] = useState('');
  const [visibility, setVisibility] = useState<Visibility>('private');
  const { register, formState, reset } = form;

  useEffect(() => {
    reset(initial);
    setNote('');
  }, [initial, reset]);

  // Server-side issues name paths like definition.vehicle.params.battery.cca: show them on their fields.
  useEffect(() => {
    if (saveError instanceof ApiError && saveError.issues) {
      for (const issue of saveError.issues) {
        const path = issue.path.replace(/^definition\.?/, '');
        if (path) form.setError(path as FieldPath<ScenarioFormValues>, { type: 'server', message: issue.message });
      }
    }
  }, [saveError, form]);

  const errorCount = Object.keys(formState.errors).length;
  const e = formState.errors;
  const msg = (name: string) => (get(e, name) as { message?: string } | undefined)?.message;

  const submit = form.handleSubmit((definition) => onSave({ definition, note: note.trim(), visibility }));

  return (
    <FormProvider {...form}>
      <form onSubmit={submit} noValidate aria-label={mode === 'create' ? 'New scenario' : 'Edit scenario'} className="grid gap-6 lg:grid-cols-[12rem_1fr]">
        <nav aria-label="Editor sections" className="hidden lg:block">
          <ul className="sticky top-4 space-y-1 text-sm">
            {SECTIONS.map(([id, title]) => (
              <li key={id}>
                <a href={`#section-${id}`} className="block rounded px-2 py-1 text-slate-600 hover:bg-slate-200/60 hover:text-slate-900">
                  {title}
                </a>
              </li>
            ))}
          </ul>
        </nav>
        <div className="min-w-0 space-y-6">
          <fieldset disabled={readOnly} className="min-w-0 space-y-6">
            <Section id="scenario" title="Scenario">
              <div className="grid gap-4 sm:grid-cols-2">
                <TextField label="Title" {...register('title')} error={msg('title')} />
                <SelectField label="Difficulty" {...register('difficulty')} error={msg('difficulty')}>
                  {DIFFICULTIES.map((d) => (
                    <option key={d} value={d}>
                      {DIFFICULTY_LABELS[d]}
                    </option>
                  ))}
                </SelectField>
                <div className="sm:col-span-2">
                  <FieldShell label="Customer’s complaint (what the student is told)" error={msg('summary')} hint="Do not name the fault here: the student reads this before testing.">
                    {({ id, describedBy }) => (
                      <textarea
                        id={id}
                        rows={3}
                        aria-describedby={describedBy}
                        aria-invalid={msg('summary') ? true : undefined}
                        className="block w-full rounded-md border-0 bg-white px-3 py-2 text-sm ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500"
                        {...register('summary')}
                      />
                    )}
                  </FieldShell>
                </div>
              </div>
            </Section>

            <Section id="vehicle" title="Vehicle">
              <p className="mb-3 text-xs text-slate-500">Invent the vehicle: no real makes or models.</p>
              <FieldGrid>
                <TextField label="Vehicle name" {...register('vehicle.name')} error={msg('vehicle.name')} />
                <SelectField label="Kind" {...register('vehicle.kind')} error={msg('vehicle.kind')}>
                  {VEHICLE_KINDS.map((k) => (
                    <option key={k} value={k}>
                      {k === 'suv' ? 'SUV' : `${k.charAt(0).toUpperCase()}${k.slice(1)}`}
                    </option>
                  ))}
                </SelectField>
                <TextField label="Engine" {...register('vehicle.engineDescription')} error={msg('vehicle.engineDescription')} />
                <ParamField path="engine.idleRpm" />
                <ParamField path="engine.maxHeldRpm" />
                <ParamField path="belt.pulleyRatio" hint="Crank pulley over alternator pulley; modern cars 2.5 to 3.2" />
                <ParamField path="belt.gripNm" hint="A good belt passes 20 to 30 N·m at the alternator pulley" />
                <ParamField path="ambientC" />
                <ParamField path="engineTempC" />
              </FieldGrid>
              <Advanced title="Engine and starter details">
                <FieldGrid>
                  <ParamField path="engine.lagTimeConstantS" />
                  <ParamField path="engine.crankRpm" />
                  <ParamField path="engine.crankCurrentA" />
                  <ParamField path="engine.minCrankVoltageV" />
                  <ParamField path="engine.crankToStartS" />
                  <ParamField path="belt.creep01" />
                  <TextField label="Parameter set label" {...register('vehicle.params.label')} error={msg('vehicle.params.label')} />
                </FieldGrid>
              </Advanced>
            </Section>

            <Section id="battery" title="Battery">
              <FieldGrid>
                <ParamField path="battery.cca" />
                <ParamField path="battery.capacityAh" />
                <ParamField path="battery.ageYears" />
                <ParamField path="battery.initialSoc01" hint="0 (flat) to 1 (full); a partly charged battery loads the alternator in the output test" />
                <ParamField path="battery.tempC" />
                <ParamField path="battery.internalResistanceOhmAt25C" hint="About 2.5 / CCA for a healthy battery" />
              </FieldGrid>
              <Advanced>
                <FieldGrid>
                  <ParamField path="battery.initialSurfaceChargeV" />
                  <ParamField path="battery.surfaceChargeTimeConstantS" />
                  <ParamField path="battery.sulfation01" hint="0 for a healthy battery; the weak-battery fault adds sulfation too" />
                </FieldGrid>
              </Advanced>
            </Section>

            <Section id="alternator" title="Alternator and regulator">
              <FieldGrid>
                <ParamField path="alternator.ratedCurrentA" />
                <ParamField path="alternator.ratedAltRpm" />
                <ParamField path="alternator.cutInAltRpm" />
                <ParamField path="alternator.polePairs" />
                <ParamField path="alternator.initialTempC" />
                <NameplateCheck />
                <ParamField path="regulator.setPointVAt25C" />
                <ParamField path="regulator.tempCoeffVPerC" />
                <SelectField label="Regulator senses at" {...register('vehicle.params.regulator.sense')} error={msg('vehicle.params.regulator.sense')}>
                  <option value="battery">The battery (a sense wire that also feeds the field)</option>
                  <option value="bplus">Its own B+ stud (field from B+, excited through the charge lamp)</option>
                </SelectField>
              </FieldGrid>
              <Advanced title="Stator, field, rectifier and thermal details">
                <FieldGrid>
                  <ParamField path="alternator.statorResistanceOhmAt20C" />
                  <ParamField path="alternator.synchronousInductanceH" />
                  <ParamField path="alternator.fieldResistanceOhmAt20C" />
                  <ParamField path="alternator.fieldInductanceH" />
                  <ParamField path="alternator.brushResistanceOhm" />
                  <ParamField path="alternator.fieldKneeCurrentA" />
                  <ParamField path="alternator.diodeSaturationCurrentA" />
                  <ParamField path="alternator.diodeEmissionCoefficient" />
                  <ParamField path="alternator.diodeSeriesResistanceOhm" />
                  <ParamField path="alternator.keyOffLeakageA" />
                  <ParamField path="alternator.fullLoadTempRiseC" />
                  <ParamField path="alternator.thermalTimeConstantS" />
                  <ParamField path="alternator.efficiency01" />
                  <ParamField path="regulator.dutyFloor01" />
                  <ParamField path="regulator.preExcitationDuty01" />
                </FieldGrid>
              </Advanced>
            </Section>

            <Section id="wiring" title="Wiring">
              <FieldGrid>
                <ParamField path="wiring.bplusCableAwg" />
                <ParamField path="wiring.bplusCableLengthM" />
                <ParamField path="wiring.batteryPosCableAwg" />
                <ParamField path="wiring.batteryPosCableLengthM" />
                <ParamField path="wiring.batteryNegCableAwg" />
                <ParamField path="wiring.batteryNegCableLengthM" />
                <ParamField path="wiring.groundStrapAwg" />
                <ParamField path="wiring.groundStrapLengthM" />
                <ParamField path="wiring.fusibleLinkAwg" hint="Usually four gauge numbers smaller than the wire it protects" />
                <ParamField path="wiring.fusibleLinkLengthM" />
                <ParamField path="wiring.fusibleLinkRatingA" />
                <ParamField path="wiring.fusibleLinkI2tA2s" />
              </FieldGrid>
              <Advanced title="Joints, extra resistances and sense line">
                <FieldGrid>
                  <ParamField path="wiring.connectionResistanceOhm" />
                  <ParamField path="wiring.bplusExtraOhm" />
                  <ParamField path="wiring.groundExtraOhm" />
                  <ParamField path="wiring.postClampPosOhm" />
                  <ParamField path="wiring.postClampNegOhm" />
                  <ParamField path="wiring.senseLineOhm" />
                  <label className="flex items-center gap-2 text-sm">
                    <input type="checkbox" {...register('vehicle.params.wiring.fusibleLinkOpen')} />
                    Fusible link open from the start
                  </label>
                </FieldGrid>
              </Advanced>
            </Section>

            <Section id="loads" title="Loads">
              <FieldGrid>
                <ParamField path="loads.baseElectronicsA" />
                <ParamField path="loads.keyOffAwakeA" />
                <ParamField path="loads.keyOffSleepA" />
                <ParamField path="loads.moduleSleepDelayS" />
                <ParamField path="loads.stuckDrawA" />
              </FieldGrid>
              <div className="mt-4">
                <AccessoriesField />
              </div>
              <Advanced title="Carbon pile tester">
                <FieldGrid>
                  <ParamField path="pile.maxCurrentAAt12V" />
                  <ParamField path="pile.heatCapacityJPerC" />
                  <ParamField path="pile.coolingWPerC" />
                  <ParamField path="pile.warnC" />
                  <ParamField path="pile.tripC" />
                  <ParamField path="pile.resetC" />
                </FieldGrid>
              </Advanced>
            </Section>

            <Section id="faults" title="Faults">
              <FaultsSection />
              <div className="mt-6">
                <h3 className="mb-2 text-sm font-semibold text-slate-800">Live preview: output at 13.5 V, full field, cold</h3>
                <Preview />
              </div>
              <div className="mt-6">
                <VehicleChecksPanel />
              </div>
            </Section>

            <Section id="rules" title="Tests and pass rules">
              <TestsAndRulesSection />
            </Section>

            <Section id="choices" title="Diagnosis choices">
              <DiagnosisChoicesSection />
            </Section>

            <Section id="hints" title="Hints and objectives">
              <div className="grid gap-4 md:grid-cols-2">
                <LinesField name="hints" label="Hints (one per line)" hint="Shown to the student on request; guide the method, do not name the fault." />
                <LinesField name="objectives" label="Learning objectives (one per line)" hint="For you and for the feedback after submission." />
                <div className="max-w-xs">
                  <BoundedNumberField
                    name="hintPoints"
                    bound={{ label: 'Points per hint', unit: '', min: 0, max: MAX_HINT_POINTS, integer: true }}
                    hint={`Taken off an assigned attempt’s grade for each hint the student opens: 0 to ${MAX_HINT_POINTS} (0: hints are free). The student sees the cost before opening one.`}
                  />
                </div>
              </div>
            </Section>
          </fieldset>

          {!readOnly && (
            <div className="sticky bottom-0 z-10 flex flex-wrap items-end gap-3 rounded-xl bg-white/95 p-4 shadow-lg ring-1 ring-slate-200 backdrop-blur">
              <div className="min-w-64 flex-1">
                <TextField label={mode === 'create' ? 'Note for version 1 (optional)' : 'What changed (optional)'} value={note} onChange={(ev) => setNote(ev.target.value)} maxLength={500} />
              </div>
              {mode === 'create' && (
                <div className="w-48">
                  <SelectField label="Visibility" value={visibility} onChange={(ev) => setVisibility(ev.target.value as Visibility)}>
                    <option value="private">Private (only me)</option>
                    <option value="shared">Shared with instructors</option>
                  </SelectField>
                </div>
              )}
              <Button type="submit" disabled={saving}>
                {saving ? 'Saving…' : mode === 'create' ? 'Create scenario' : 'Save as a new version'}
              </Button>
              <p role="status" aria-live="polite" className="w-full text-sm">
                {errorCount > 0 && formState.isSubmitted && <span className="text-stop-700">Some fields need attention: they are marked in red.</span>}
                {saveError instanceof Error && <span className="ml-2 text-stop-700">{saveError.message}</span>}
              </p>
            </div>
          )}
        </div>
      </form>
    </FormProvider>
  );
}
