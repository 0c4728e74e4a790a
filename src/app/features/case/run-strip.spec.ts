import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { NEVER, type Observable } from 'rxjs';

import { templateCase } from '../../../../shared/case/templates';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CASE_REPOSITORY } from './case-repository';
import { CaseWorkspace } from './case-workspace';
import { RunStrip } from './run-strip';

/** A pool fake that counts the motion runs asked of it and never answers (the strip only starts them). */
class CountingPool {
  motionRuns = 0;
  motion(): Observable<never> {
    this.motionRuns++;
    return NEVER;
  }
}

describe('RunStrip', () => {
  let workspace: CaseWorkspace;
  let pool: CountingPool;

  beforeEach(() => {
    pool = new CountingPool();
    TestBed.configureTestingModule({
      providers: [
        provideRouter([{ path: 'rig', children: [] }]),
        CaseWorkspace,
        // The strip never saves or opens a case.
        { provide: CASE_REPOSITORY, useValue: {} },
        { provide: ENGINE_POOL, useValue: pool },
      ],
    });
    workspace = TestBed.inject(CaseWorkspace);
    workspace.applyParams(templateCase());
  });

  function render(): { host: HTMLElement; detect: () => void } {
    const fixture = TestBed.createComponent(RunStrip);
    fixture.componentRef.setInput('job', workspace.motionJob);
    fixture.componentRef.setInput('label', 'Run motion');
    fixture.componentRef.setInput('testId', 'run-motion');
    fixture.componentRef.instance.run.subscribe(() => workspace.runMotion());
    fixture.detectChanges();
    return { host: fixture.nativeElement as HTMLElement, detect: () => fixture.detectChanges() };
  }

  const runButton = (host: HTMLElement) => host.querySelector<HTMLButtonElement>('[data-testid=run-motion]');

  it('refuses to run while a field is invalid, says why in the shown unit, and links to the field', async () => {
    const { host, detect } = render();
    expect(runButton(host)?.disabled).toBe(false);

    // 0 Hz ran at the last valid 40 Hz before.
    workspace.form.group.controls.drive.controls.frequency.setValue(0);
    detect();
    expect(runButton(host)?.disabled).toBe(true);
    expect(host.querySelector('[data-testid=run-refusal]')?.textContent).toContain('Drive frequency: must be more than 0 Hz');
    expect(host.querySelector('[data-testid=go-to-field]')?.textContent).toContain('Go to Drive frequency');

    // Even a direct call does not run the last valid case.
    workspace.runMotion();
    expect(pool.motionRuns).toBe(0);

    (host.querySelector('[data-testid=go-to-field]') as HTMLElement).click();
    expect(workspace.focusRequest()).toBe('drive.frequency');
    await TestBed.inject(Router).navigateByUrl('/');

    workspace.form.group.controls.drive.controls.frequency.setValue(40);
    detect();
    expect(host.querySelector('[data-testid=run-refusal]')).toBeNull();
    runButton(host)?.click();
    expect(pool.motionRuns).toBe(1);
    detect();
    expect(host.querySelector('[data-testid=run-motion-progress]')?.textContent).toBe('0 %');
  });

  it('names the other fields that need attention, each once', () => {
    const { host, detect } = render();
    workspace.form.group.controls.drive.controls.frequency.setValue(0);
    workspace.form.group.controls.drive.controls.amplitude.setValue(-1);
    detect();
    const text = host.querySelector('[data-testid=run-refusal]')?.textContent ?? '';
    expect(text).toMatch(/Drive amplitude: must be at least 0 mm\s+Also to fix: Drive frequency\./);
    expect(text).not.toMatch(/\(\d+ more\)/);
  });

  it('states a cross-field limit with its reason, in the unit the user chose', () => {
    workspace.setUnits({ length: 'mm', frequency: 'rpm', angle: 'deg' });
    const { host, detect } = render();
    // 100000 s flagged invalid used to run the last valid 20 s; now the run waits.
    workspace.form.group.controls.run.controls.duration.setValue(100000);
    detect();
    expect(host.querySelector('[data-testid=run-refusal]')?.textContent).toMatch(
      /Simulated time: must be at most 50000 s: a run may span at most 2,000,000 drive periods/,
    );
    workspace.form.group.controls.run.controls.duration.setValue(20);
    workspace.form.group.controls.drive.controls.frequency.setValue(1e-28);
    detect();
    expect(host.querySelector('[data-testid=run-refusal]')?.textContent).toMatch(/Drive frequency: must be at least [\d.]+ rev\/min/);
  });

  it('counts a chunked job in steps, so the bar and its text agree', () => {
    const fixture = TestBed.createComponent(RunStrip);
    fixture.componentRef.setInput('job', workspace.sweepJob);
    fixture.componentRef.setInput('label', 'Run sweep');
    fixture.componentRef.setInput('testId', 'run-sweep');
    fixture.componentRef.setInput('steps', { done: 20, total: 49, noun: 'points' });
    workspace.sweepJob.start(NEVER, () => undefined);
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelector('[data-testid=run-sweep-progress]')?.textContent).toBe('20 of 49 points');
    expect(host.querySelector('mat-progress-bar')?.getAttribute('aria-valuenow')).toBe('41');
    (host.querySelector('[data-testid=run-sweep-cancel]') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(workspace.sweepJob.running()).toBe(false);
    expect(host.textContent).toContain('Cancelled.');
  });
});
