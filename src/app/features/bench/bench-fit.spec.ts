import { signal } from '@angular/core';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { MatSnackBar } from '@angular/material/snack-bar';

import { templateCase } from '../../../../shared/case/templates';
import { handleEngineRequest } from '../../../../shared/compute/handle-request';
import type { EngineRequest, EngineResponse } from '../../../../shared/compute/protocol';
import { WorkerPool, type WorkerLike } from '../../../../shared/compute/worker-pool';
import { syntheticTrace } from '../../../../shared/engine/synthetic-trace';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CaseWorkspace } from '../case/case-workspace';
import { DEFAULT_UNITS } from '../../core/units/display-units';
import type { BenchTrace } from '../library/library-types';
import { BenchFit } from './bench-fit';

/** The real engine behind the pool, answering on the next task. */
class InProcessWorker implements WorkerLike {
  onmessage: ((event: { data: EngineResponse }) => void) | null = null;
  onerror: ((event: { message?: string }) => void) | null = null;
  postMessage(message: EngineRequest): void {
    setTimeout(() => handleEngineRequest(message, (response) => this.onmessage?.({ data: response })), 0);
  }
  terminate(): void {
    this.onmessage = null;
  }
}

const base = templateCase();
const swing = syntheticTrace(
  { ...base, body: { kind: 'point-mass', length: 0.3, mass: 0.1 }, drive: { ...base.drive, amplitude: 0 }, start: { angle: Math.PI + 0.3, rate: 0 } },
  { sampleRate: 100, duration: 10, noise: 0.001, offset: 0.02, fromHanging: true, seed: 4 },
);
const TRACE: BenchTrace = {
  id: 't1', label: 'Bench swing', fileName: 'swing.csv', sizeBytes: 4096, rows: swing.time.length, columns: ['time', 'angle'], angleUnit: 'rad', duration: 10,
  createdAt: '2026-12-01T10:00:00.000Z', author: null, time: swing.time, angle: swing.angle, pivot: null,
};

describe('BenchFit', { timeout: 30_000 }, () => {
  let fixture: ComponentFixture<BenchFit>;
  let host: HTMLElement;
  const applied: Array<{ params: unknown; note: string }> = [];

  beforeEach(() => {
    applied.length = 0;
    TestBed.configureTestingModule({
      imports: [BenchFit],
      providers: [
        { provide: ENGINE_POOL, useFactory: () => new WorkerPool(() => new InProcessWorker(), 1) },
        { provide: MatSnackBar, useValue: { open: () => undefined } },
        {
          provide: CaseWorkspace,
          useValue: {
            draft: signal(base),
            readOnly: signal(false),
            units: signal(DEFAULT_UNITS),
            applyParamsWithNote: (params: unknown, note: string) => applied.push({ params, note }),
          },
        },
      ],
    });
    fixture = TestBed.createComponent(BenchFit);
    fixture.componentRef.setInput('trace', TRACE);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
  });

  async function fit(): Promise<void> {
    const button = Array.from(host.querySelectorAll('button')).find((b) => b.textContent?.trim() === 'Fit');
    button?.click();
    for (let i = 0; i < 1000 && !host.querySelector('[data-testid="fit-summary"]'); i++) {
      await new Promise((resolve) => setTimeout(resolve, 25));
      fixture.detectChanges();
    }
  }

  it('shows each estimate with its standard uncertainty in display units, and the residual', async () => {
    await fit();
    const rows = Array.from(host.querySelectorAll('table.estimates tbody tr'), (tr) =>
      Array.from(tr.children, (c) => c.textContent?.trim() ?? ''),
    );
    const length = rows.find((r) => r[0] === 'Equivalent length');
    expect(length?.[1]).toMatch(/^(299\.\d+|300(\.\d+)?) mm$/);
    expect(length?.[2]).toMatch(/^± [\d.e−-]+ mm$/);
    expect(rows.map((r) => r[0])).toContain('Sensor reading at rest');
    expect(host.querySelector('[data-testid="fit-summary"]')?.textContent).toContain(`over ${TRACE.rows} points`);
    expect(host.querySelector('figure[aria-label="Fit residual"]')).not.toBeNull();
  });

  it('applies the fitted body and damping to the rig with a note naming the trace', async () => {
    await fit();
    const apply = Array.from(host.querySelectorAll('button')).find((b) => b.textContent?.includes('Apply to the rig'));
    apply?.click();
    expect(applied).toHaveLength(1);
    const params = applied[0].params as typeof base;
    expect(params.body.kind === 'point-mass' ? params.body.length : 0).toBeCloseTo(0.3, 3);
    expect(applied[0].note).toContain('"Bench swing"');
  });
});
