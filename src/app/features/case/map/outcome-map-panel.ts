import { ChangeDetectionStrategy, Component, computed, effect, inject, signal, untracked } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';

import { sweepableFieldsFor } from '../../../../../shared/case/case-fields';
import type { CaseParams } from '../../../../../shared/case/case-schema';
import { axisValues, type GridAxis } from '../../../../../shared/engine/chart';
import { defaultRunSettings, MAX_MAP_COUNT } from '../../../../../shared/engine/run-kinds';
import type { RunSettings } from '../../../../../shared/engine/run-record';
import { fromDisplay, toDisplay, type DisplayUnits } from '../../../core/units/display-units';
import { formatNumber } from '../../../core/units/format-number';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { cellMapPlot, outcomeCounts, type MapCells } from './cell-map-plot';
import {
  AXIS_NAMES, MIN_MAP_COUNT, axisForm, defaultAxisForm, mapAxisView, mapField, mapGridOf, type MapAxisForm,
} from './outcome-map-form';

/** Above this many cells the panel suggests running on the server (the browser must stay open for the whole run). */
export const LARGE_BROWSER_MAP = 400;

type Axis = 'x' | 'y';

/**
 * The outcome map in the Map tab: the outcome of the full motion over a grid of two case fields (drive frequency by
 * drive amplitude unless the user picks others), run in the browser's workers with rows filling in as they finish,
 * or on the server; a stored map of the revision shows here too.
 */
@Component({
  selector: 'qp-outcome-map-panel',
  imports: [FormsModule, MatFormFieldModule, MatInputModule, MatSelectModule, Plot, RunStrip, ServerRun, StoredMark],
  templateUrl: './outcome-map-panel.html',
  styleUrls: ['../tab.scss', './outcome-map-panel.scss'],
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OutcomeMapPanel {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.outcomeMapJob;
  protected readonly result = this.workspace.outcomeMap;
  protected readonly units = this.workspace.units;
  protected readonly stale = computed(() => this.workspace.isStale(this.result()));
  protected readonly names = AXIS_NAMES;
  protected readonly minCount = MIN_MAP_COUNT;
  protected readonly maxCount = MAX_MAP_COUNT;
  protected readonly axes: readonly Axis[] = ['x', 'y'];

  protected readonly fields = computed(() => sweepableFieldsFor(this.workspace.draft()));
  protected readonly form = signal<Record<Axis, MapAxisForm>>(this.defaults());

  /** The unit each axis's range is typed in. */
  protected readonly unitOf = computed(() => {
    const params = this.workspace.draft();
    const units = this.units();
    const f = this.form();
    return { x: mapField(f.x.field, params, units).unit, y: mapField(f.y.field, params, units).unit };
  });

  private readonly checked = computed(() => mapGridOf(this.form().x, this.form().y, this.workspace.draft(), this.units()));
  protected readonly problem = computed(() => {
    const c = this.checked();
    return 'problem' in c ? c.problem : null;
  });
  protected readonly grid = computed(() => {
    const c = this.checked();
    return 'grid' in c ? c.grid : null;
  });
  protected readonly settings = computed<RunSettings | null>(() => {
    const grid = this.grid();
    return grid ? { kind: 'map', grid } : null;
  });

  protected readonly size = computed(() => {
    const { x, y } = this.form();
    const cells = (x.count ?? 0) * (y.count ?? 0);
    return { cells, duration: formatNumber(this.workspace.draft().run.duration, 4), large: cells > LARGE_BROWSER_MAP };
  });

  /** Progress in cells, so the bar and its text tell the same count. */
  protected readonly steps = computed(() => {
    const sofar = this.workspace.outcomeMapPartial();
    if (!this.job.running() || !sofar) return null;
    return { done: sofar.done, total: sofar.cells.length, noun: 'cells' };
  });

  /** The map shown: the running one with the rows finished so far, else the result (computed here or stored). */
  protected readonly shown = computed(() => {
    const sofar = this.workspace.outcomeMapPartial();
    const units = this.units();
    if (this.job.running() && sofar) {
      const params = this.workspace.draft();
      const value = { ...sofar, xValues: axisValues(sofar.grid.x), yValues: axisValues(sofar.grid.y) };
      return this.view(value, sofar.grid.x, sofar.grid.y, params, units, true);
    }
    const r = this.result();
    if (!r) return null;
    return this.view(r.value, r.value.grid.x, r.value.grid.y, r.params, units, false);
  });

  constructor() {
    // The form shows the map on screen: on coming back to the tab, and when a stored or server map arrives.
    effect(() => {
      const grid = this.result()?.value.grid;
      if (!grid) return;
      untracked(() => {
        const params = this.result()?.params ?? this.workspace.draft();
        this.form.set({ x: axisForm(grid.x, params, this.units()), y: axisForm(grid.y, params, this.units()) });
      });
    });
    // A switch of display units keeps the ranges: the typed values are converted to the new units.
    let before: DisplayUnits = untracked(this.units);
    effect(() => {
      const now = this.units();
      if (now === before) return;
      const was = before;
      before = now;
      untracked(() => this.form.update((f) => ({ x: this.convert(f.x, was, now), y: this.convert(f.y, was, now) })));
    });
  }

  protected setField(axis: Axis, field: string): void {
    const current = this.form()[axis];
    if (field === current.field) return;
    const next = defaultAxisForm(field, current.count ?? 9, this.workspace.draft(), this.units());
    this.form.update((f) => ({ ...f, [axis]: next }));
  }

  protected setValue(axis: Axis, key: 'from' | 'to' | 'count', value: number | null): void {
    this.form.update((f) => ({ ...f, [axis]: { ...f[axis], [key]: value } }));
  }

  protected setScale(axis: Axis, scale: 'linear' | 'log'): void {
    this.form.update((f) => ({ ...f, [axis]: { ...f[axis], scale } }));
  }

  protected run(): void {
    const grid = this.grid();
    if (grid) this.workspace.runOutcomeMap(grid);
  }

  protected percent(share: number): string {
    return `${formatNumber(100 * share, 3)} %`;
  }

  private defaults(): Record<Axis, MapAxisForm> {
    const params = this.workspace.draft();
    const { grid } = defaultRunSettings('map', params);
    const units = this.workspace.units();
    return { x: axisForm(grid.x, params, units), y: axisForm(grid.y, params, units) };
  }

  private convert(a: MapAxisForm, was: DisplayUnits, now: DisplayUnits): MapAxisForm {
    const { dimension } = mapField(a.field, this.workspace.draft(), now);
    const move = (v: number | null) => (v === null ? null : toDisplay(fromDisplay(v, dimension, was), dimension, now));
    return { ...a, from: move(a.from), to: move(a.to) };
  }

  private view(value: MapCells, x: GridAxis, y: GridAxis, params: CaseParams, units: DisplayUnits, running: boolean) {
    const xv = mapAxisView(x, params, units);
    const yv = mapAxisView(y, params, units);
    return {
      plot: cellMapPlot(value, xv, yv),
      counts: outcomeCounts(value.cells),
      computed: value.cells.filter((c) => c).length,
      total: value.cells.length,
      title: `Outcome map: ${xv.label} by ${yv.label}`,
      running,
    };
  }
}
