/** UI state of the bench (not the model's): the tool in hand, the open procedure and the side panel's tab. */
import { create } from 'zustand';
import type { DiagnosticTest } from '../../../../sim/faults.ts';

export type BenchTool = 'red' | 'black' | 'clamp';

export const SIDE_TABS = ['procedure', 'hookup', 'car', 'readings', 'charts', 'diagnose'] as const;
export type SideTab = (typeof SIDE_TABS)[number];

interface BenchUiState {
  /** A lead or the clamp picked up by click, waiting for a target. */
  tool: BenchTool | null;
  procedure: DiagnosticTest;
  sideTab: SideTab;
  pickTool: (tool: BenchTool | null) => void;
  openProcedure: (test: DiagnosticTest) => void;
  openSideTab: (tab: SideTab) => void;
}

export const useBenchUi = create<BenchUiState>((set) => ({
  tool: null,
  procedure: 'battery-ocv',
  sideTab: 'procedure',
  pickTool: (tool) => set({ tool }),
  openProcedure: (procedure) => set({ procedure }),
  openSideTab: (sideTab) => set({ sideTab }),
}));
