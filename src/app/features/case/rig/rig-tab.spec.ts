import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { MatButtonToggleHarness } from '@angular/material/button-toggle/testing';
import { MatSelectHarness } from '@angular/material/select/testing';

import { WorkerPool } from '../../../../../shared/compute/worker-pool';
import { ENGINE_POOL } from '../../../core/compute/engine-pool';
import { CASE_REPOSITORY } from '../case-repository';
import { CaseWorkspace } from '../case-workspace';
import { FakeCaseRepository } from '../fake-case-repository';
import { RigTab } from './rig-tab';

describe('RigTab', () => {
  let fixture: ComponentFixture<RigTab>;
  let host: HTMLElement;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      imports: [RigTab],
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        CaseWorkspace,
        { provide: CASE_REPOSITORY, useExisting: FakeCaseRepository },
        // The Rig tab computes nothing in workers; a pool whose workers would fail loudly proves it.
        {
          provide: ENGINE_POOL,
          useFactory: () =>
            new WorkerPool(() => {
              throw new Error('the Rig tab must not start workers');
            }, 1),
        },
      ],
    });
    fixture = TestBed.createComponent(RigTab);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    await fixture.whenStable();
  });

  const field = (name: string) => host.querySelector<HTMLInputElement>(`input[data-field="${name}"]`);

  async function type(name: string, value: string): Promise<void> {
    const input = field(name);
    if (!input) throw new Error(`no field ${name}`);
    input.value = value;
    input.dispatchEvent(new Event('input'));
    input.dispatchEvent(new Event('blur'));
    fixture.detectChanges();
    await fixture.whenStable();
  }

  it('fills the whole form from a preset', async () => {
    const loader = TestbedHarnessEnvironment.loader(fixture);
    const preset = await loader.getHarness(MatSelectHarness.with({ selector: '[data-testid=preset-select]' }));
    await preset.open();
    await preset.clickOptions({ text: 'Tall rod on an electrodynamic shaker' });
    [...host.querySelectorAll('button')].find((b) => b.textContent?.includes('Fill the form'))?.click();
    fixture.detectChanges();
    await fixture.whenStable();
    expect(field('drive.amplitude')?.value).toBe('8');
    expect(field('drive.frequency')?.value).toBe('60');
    expect(field('body.rodLength')?.value).toBe('500');
    const kind = await loader.getHarness(MatSelectHarness.with({ selector: '[data-testid=body-kind]' }));
    expect(await kind.getValueText()).toBe('Rod with a bob');
    expect(TestBed.inject(CaseWorkspace).draft().drive.amplitude).toBeCloseTo(0.008, 12);
  });

  it('fills a chain preset: every link editable, the summary naming the slowest swing', async () => {
    const loader = TestbedHarnessEnvironment.loader(fixture);
    const preset = await loader.getHarness(MatSelectHarness.with({ selector: '[data-testid=preset-select]' }));
    await preset.open();
    await preset.clickOptions({ text: 'Three beads on light hinged links' });
    [...host.querySelectorAll('button')].find((b) => b.textContent?.includes('Fill the form'))?.click();
    fixture.detectChanges();
    await fixture.whenStable();
    expect(host.querySelectorAll('fieldset.link')).toHaveLength(3);
    expect(field('body.links.2.length')?.value).toBe('100');
    await type('body.links.2.length', '120');
    const draft = TestBed.inject(CaseWorkspace).draft();
    expect(draft.body.kind === 'chain' && draft.body.links[2]).toMatchObject({ kind: 'point-mass', length: 0.12 });
    expect(host.textContent).toContain('of the chain’s slowest free swing');
    expect(host.textContent).toContain('Link 3: point mass 0.05 kg at 120 mm');
  });

  it('shows a refused value under its field, in the shown unit, and clears it once fixed', async () => {
    await type('drive.amplitude', '-3');
    expect(host.querySelector('mat-error')?.textContent?.trim()).toBe('Must be at least 0 mm');
    expect(host.textContent).toContain('1 field needs attention');
    await type('drive.amplitude', '4');
    expect(host.querySelector('mat-error')).toBeNull();
    expect(TestBed.inject(CaseWorkspace).draft().drive.amplitude).toBeCloseTo(0.004, 12);
  });

  it('switches lengths to cm and shows the same case in the new unit', async () => {
    const loader = TestbedHarnessEnvironment.loader(fixture);
    const cm = await loader.getHarness(MatButtonToggleHarness.with({ text: 'cm' }));
    await cm.check();
    fixture.detectChanges();
    await fixture.whenStable();
    expect(field('drive.amplitude')?.value).toBe('1');
    expect(field('body.length')?.value).toBe('20');
    expect(host.textContent).toContain('Equivalent length L');
    expect(host.querySelector('[data-testid=rig-summary]')?.textContent).toContain('20 cm');
  });

  it('redraws the summary from the inputs', async () => {
    await type('drive.frequency', '80');
    const summary = host.querySelector('[data-testid=rig-summary]')?.textContent ?? '';
    // (a w)^2 / (g L) with a = 10 mm, f = 80 Hz, L = 0.2 m: (0.01 * 2 pi * 80)^2 / (9.80665 * 0.2) = 12.88
    expect(summary).toContain('12.9');
  });
});
