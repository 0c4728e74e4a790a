import { BreakpointObserver } from '@angular/cdk/layout';
import { ChangeDetectionStrategy, Component, computed, inject, input, viewChild } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatTooltipModule } from '@angular/material/tooltip';
import { PlotlyComponent, PlotlyService } from 'angular-plotly.js';
import plotlyLibrary from 'plotly.js-dist-min';
import { map } from 'rxjs';

import { downloadText, toCsv, type CsvCell, type CsvColumn } from '../csv';

// Registered here, in a lazily loaded chunk: Plotly never reaches the initial bundle.
PlotlyService.setPlotly(plotlyLibrary);

/** A Plotly trace or layout (Plotly's own typings are not installed; it checks its inputs itself). */
export type PlotSpec = Record<string, unknown>;

/** The data behind a plot, for its CSV export. */
export interface PlotCsv {
  readonly columns: readonly CsvColumn[];
  readonly rows: readonly (readonly CsvCell[])[];
}

interface ImageExporter {
  downloadImage(element: HTMLElement, options: { format: 'png' | 'svg'; filename: string; width: number; height: number }): Promise<unknown>;
}

function isImageExporter(value: unknown): value is ImageExporter {
  return typeof value === 'object' && value !== null && 'downloadImage' in value && typeof value.downloadImage === 'function';
}

/** A file name stem from a title. */
export function fileStem(title: string): string {
  return title.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'plot';
}

/**
 * A plot with export buttons: PNG and SVG through Plotly's image export, and CSV of the data it shows. Axis titles
 * carry units; callers pass them in the layout.
 */
@Component({
  selector: 'qp-plot',
  imports: [PlotlyComponent, MatButtonModule, MatIconModule, MatTooltipModule],
  template: `
    <figure class="plot" [attr.aria-label]="title()">
      <plotly-plot
        [data]="plotData()"
        [layout]="fullLayout()"
        [config]="config"
        [useResizeHandler]="true"
        [style]="{ width: '100%', height: height() + 'px' }"
        (afterPlot)="nameToolbarButtons()"
      />
      <figcaption class="plot-actions">
        <span class="plot-title">{{ title() }}</span>
        <button matButton type="button" (click)="exportImage('png')" [attr.aria-label]="'Download ' + title() + ' as PNG'">PNG</button>
        <button matButton type="button" (click)="exportImage('svg')" [attr.aria-label]="'Download ' + title() + ' as SVG'">SVG</button>
        @if (csv()) {
          <button matButton type="button" (click)="exportCsv()" [attr.aria-label]="'Download ' + title() + ' data as CSV'">CSV</button>
        }
      </figcaption>
    </figure>
  `,
  styles: `
    :host { display: block; min-width: 0; }
    .plot { margin: 0; min-width: 0; }
    .plot-actions { display: flex; align-items: center; flex-wrap: wrap; gap: 0 4px; }
    .plot-title { flex: 1; font: var(--mat-sys-label-large); color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Plot {
  /** On a phone the toolbar Plotly shows over the top right would cover a legend above the plot. */
  private readonly phone = toSignal(inject(BreakpointObserver).observe('(max-width: 599.98px)').pipe(map((s) => s.matches)), {
    initialValue: false,
  });
  private readonly plotly = viewChild(PlotlyComponent);

  readonly data = input.required<readonly PlotSpec[]>();
  readonly layout = input<PlotSpec>({});
  readonly title = input.required<string>();
  readonly csv = input<PlotCsv | null>(null);
  readonly height = input(320);

  protected readonly config = {
    displaylogo: false,
    responsive: true,
    modeBarButtonsToRemove: ['toImage', 'lasso2d', 'select2d'],
  };
  protected readonly plotData = computed(() => [...this.data()]);
  protected readonly fullLayout = computed<PlotSpec>(() => ({
    autosize: true,
    height: this.height(),
    margin: { l: 64, r: 16, t: 16, b: 52 },
    paper_bgcolor: 'rgba(0,0,0,0)',
    plot_bgcolor: 'rgba(0,0,0,0)',
    font: { family: 'Roboto, sans-serif', size: 12 },
    hovermode: 'closest',
    ...this.layout(),
    // Above the plot on a wide screen; under the x axis title on a phone, clear of the toolbar.
    legend: this.phone() ? { orientation: 'h', x: 0, y: -0.32, yanchor: 'top' } : { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom' },
  }));

  /** Plotly's toolbar buttons are links named only by a tooltip attribute: give them names screen readers read. */
  protected nameToolbarButtons(): void {
    const element = this.plotly()?.plotlyInstance;
    element?.querySelectorAll('.modebar-btn').forEach((button) => {
      const name = button.getAttribute('data-title');
      if (name) button.setAttribute('aria-label', name);
      button.setAttribute('role', 'button');
    });
  }

  protected exportImage(format: 'png' | 'svg'): void {
    const element = this.plotly()?.plotlyInstance;
    if (!element || !isImageExporter(plotlyLibrary)) return;
    void plotlyLibrary.downloadImage(element, {
      format,
      filename: fileStem(this.title()),
      width: Math.max(640, element.clientWidth),
      height: this.height(),
    });
  }

  protected exportCsv(): void {
    const csv = this.csv();
    if (csv) downloadText(`${fileStem(this.title())}.csv`, toCsv(csv.columns, csv.rows));
  }
}
