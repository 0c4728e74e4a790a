import { BreakpointObserver } from '@angular/cdk/layout';
import { HttpEventType } from '@angular/common/http';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, ErrorHandler, computed, inject, signal } from '@angular/core';
import { rxResource, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTableModule } from '@angular/material/table';
import { map } from 'rxjs';

import { apiErrorOf, describeError } from '../../core/error-message';
import { Plot, PlotCsv, PlotSpec } from '../../ui/plot/plot';
import { downloadText } from '../../ui/csv';
import { CaseWorkspace } from '../case/case-workspace';
import { formatNumber } from '../../core/units/format-number';
import { BenchTraceApi } from './bench-trace-api';
import type { BenchTrace, BenchTraceSummary } from '../library/library-types';
import { BenchFit } from './bench-fit';
import { BenchOverlay } from './bench-overlay';
import { MAX_PLOTTED_POINTS } from './plot-thinning';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

/** Largest file the server accepts; checked here too so a wrong file fails at once. */
export const MAX_TRACE_BYTES = 2 * 1024 * 1024;

export { MAX_PLOTTED_POINTS } from './plot-thinning';

/** An upload refusal in words: the server names the line of the first bad row. */
export function uploadProblem(error: unknown): string {
  const api = apiErrorOf(error);
  if (api) return api.message;
  return describeError(error);
}

/** The Bench tab: measured angle traces uploaded to the case, listed, plotted, downloaded and deleted. */
@Component({
  selector: 'qp-bench-tab',
  imports: [
    ScrollRegion,
    BenchFit,
    BenchOverlay,
    DatePipe,
    MatButtonModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    MatTableModule,
    Plot,
  ],
  templateUrl: './bench-tab.html',
  styleUrl: './bench-tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BenchTab {
  private readonly api = inject(BenchTraceApi);
  private readonly workspace = inject(CaseWorkspace);
  private readonly snackBar = inject(MatSnackBar);
  private readonly errorHandler = inject(ErrorHandler);

  protected readonly caseId = computed(() => this.workspace.opened()?.caseId ?? null);
  protected readonly canUpload = computed(() => this.caseId() !== null && !this.workspace.readOnly());
  /** Phones keep label, rows and the actions; author and date need a wider screen. */
  private readonly narrow = toSignal(
    inject(BreakpointObserver)
      .observe('(max-width: 599.98px)')
      .pipe(map((state) => state.matches)),
    { initialValue: false },
  );
  protected readonly columns = computed(() =>
    this.narrow() ? ['label', 'rows', 'actions'] : ['label', 'rows', 'duration', 'author', 'created', 'actions'],
  );

  protected readonly traces = rxResource({
    params: () => this.caseId() ?? undefined,
    stream: ({ params }) => this.api.listBenchTraces(params),
  });
  protected readonly traceList = computed(() => this.traces.value() ?? []);
  protected readonly selectedId = signal<string | null>(null);
  protected readonly selected = rxResource({
    params: () => {
      const caseId = this.caseId();
      const traceId = this.selectedId();
      return caseId && traceId ? { caseId, traceId } : undefined;
    },
    stream: ({ params }) => this.api.getBenchTrace(params.caseId, params.traceId),
  });
  protected readonly plotData = computed<PlotSpec[]>(() => {
    const trace = this.selected.value();
    if (!trace) return [];
    // SVG lines work without WebGL; long traces are thinned for drawing (the CSV keeps every row).
    const stride = Math.max(1, Math.ceil(trace.time.length / MAX_PLOTTED_POINTS));
    const thin = (values: readonly number[]) => values.filter((_, i) => i % stride === 0);
    const time = thin(trace.time);
    const data: PlotSpec[] = [
      { x: time, y: thin(trace.angle).map((a) => (a * 180) / Math.PI), type: 'scatter', mode: 'lines', name: 'angle (°)' },
    ];
    if (trace.pivot) {
      data.push({ x: time, y: thin(trace.pivot).map((p) => p * 1000), type: 'scatter', mode: 'lines', name: 'pivot (mm)', yaxis: 'y2' });
    }
    return data;
  });
  protected readonly plotLayout = computed<PlotSpec>(() => ({
    xaxis: { title: { text: 'time (s)' } },
    yaxis: { title: { text: 'angle from upright (°)' } },
    ...(this.selected.value()?.pivot ? { yaxis2: { title: { text: 'pivot position (mm)' }, overlaying: 'y', side: 'right' } } : {}),
    legend: { orientation: 'h' },
    margin: { t: 24, r: 56, b: 48, l: 64 },
  }));
  protected readonly plotCsv = computed<PlotCsv | null>(() => {
    const trace = this.selected.value();
    if (!trace) return null;
    return {
      columns: [{ header: 'time', unit: 's' }, { header: 'angle', unit: 'deg' }, ...(trace.pivot ? [{ header: 'pivot', unit: 'm' }] : [])],
      rows: trace.time.map((t, i) => [t, (trace.angle[i] * 180) / Math.PI, ...(trace.pivot ? [trace.pivot[i]] : [])]),
    };
  });

  protected readonly file = signal<File | null>(null);
  protected readonly label = signal('');
  protected readonly angleUnit = signal<'deg' | 'rad'>('deg');
  protected readonly uploading = signal(false);
  protected readonly progress = signal(0);
  protected readonly uploadError = signal<string | null>(null);
  private labelFromFile = '';

  protected formatDuration(seconds: number): string {
    return `${formatNumber(seconds)} s`;
  }

  protected chooseFile(input: HTMLInputElement): void {
    const file = input.files?.[0] ?? null;
    this.uploadError.set(null);
    if (file && file.size > MAX_TRACE_BYTES) {
      this.uploadError.set(`${file.name} is ${(file.size / 1024 / 1024).toFixed(1)} MiB; a bench trace may be at most 2 MiB.`);
      this.file.set(null);
      input.value = '';
      return;
    }
    this.file.set(file);
    // The label follows the chosen file until the user types their own.
    if (file && (this.label() === '' || this.label() === this.labelFromFile)) {
      this.labelFromFile = file.name.replace(/\.csv$/i, '');
      this.label.set(this.labelFromFile);
    }
  }

  protected upload(input: HTMLInputElement): void {
    const caseId = this.caseId();
    const file = this.file();
    if (!caseId || !file) return;
    this.uploading.set(true);
    this.progress.set(0);
    this.uploadError.set(null);
    this.api.uploadBenchTrace(caseId, file, this.label(), this.angleUnit()).subscribe({
      next: (event) => {
        if (event.type === HttpEventType.UploadProgress && event.total) this.progress.set(event.loaded / event.total);
        if (event.type === HttpEventType.Response) {
          this.uploading.set(false);
          this.progress.set(1);
          this.file.set(null);
          this.label.set('');
          input.value = '';
          this.traces.reload();
          this.snackBar.open(`Uploaded ${file.name}.`, 'OK', { duration: 4000 });
        }
      },
      error: (error: unknown) => {
        this.uploading.set(false);
        this.uploadError.set(uploadProblem(error));
      },
    });
  }

  protected show(trace: BenchTraceSummary): void {
    this.selectedId.set(this.selectedId() === trace.id ? null : trace.id);
  }

  protected download(trace: BenchTraceSummary): void {
    const caseId = this.caseId();
    if (!caseId) return;
    this.api.downloadBenchTrace(caseId, trace.id).subscribe({
      next: (blob) => void blob.text().then((text) => downloadText(trace.fileName || `${trace.label}.csv`, text)),
      error: (error: unknown) => this.errorHandler.handleError(error),
    });
  }

  protected remove(trace: BenchTraceSummary): void {
    const caseId = this.caseId();
    if (!caseId) return;
    this.api.deleteBenchTrace(caseId, trace.id).subscribe({
      next: () => {
        if (this.selectedId() === trace.id) this.selectedId.set(null);
        this.traces.reload();
        this.snackBar.open(`Deleted ${trace.label || trace.fileName}.`, 'OK', { duration: 4000 });
      },
      error: (error: unknown) => this.errorHandler.handleError(error),
    });
  }

  protected selectedTrace(): BenchTrace | null {
    return this.selected.value() ?? null;
  }

  /** A pivot column that moves (more than a micrometre): a driven trace to overlay. */
  protected readonly driven = computed(() => {
    const pivot = this.selected.value()?.pivot;
    if (!pivot || pivot.length === 0) return false;
    let lo = Infinity;
    let hi = -Infinity;
    for (const p of pivot) {
      lo = Math.min(lo, p);
      hi = Math.max(hi, p);
    }
    return hi - lo > 1e-6;
  });
}
