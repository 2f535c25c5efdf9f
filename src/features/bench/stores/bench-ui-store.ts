/** UI state of the bench (not the model's): the tool in hand and the open procedure. */
import { create } from 'zustand';
import type { DiagnosticTest } from '../../../../sim/faults.ts';

export type BenchTool = 'red' | 'black' | 'clamp';

interface BenchUiState {
  /** A lead or the clamp picked up by click, waiting for a target. */
  tool: BenchTool | null;
  procedure: DiagnosticTest;
  pickTool: (tool: BenchTool | null) => void;
  openProcedure: (test: DiagnosticTest) => void;
}

export const useBenchUi = create<BenchUiState>((set) => ({
  tool: null,
  procedure: 'battery-ocv',
  pickTool: (tool) => set({ tool }),
  openProcedure: (procedure) => set({ procedure }),
}));
