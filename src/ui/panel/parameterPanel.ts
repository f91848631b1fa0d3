/**
 * The parameter panel: lil-gui controls grouped by physical part, bound to a flat view object that
 * is refreshed from our own draft of the preset (never the other way round, and lil-gui's own
 * save/load is not used). Every edit goes to the draft through the field's setter and is reported
 * as 'live' (while dragging) or 'final' (change finished); the app validates and decides what runs.
 */
import GUI, { type Controller, type NumberController } from 'lil-gui';
import type { PresetIssue } from '../../presets/issues';
import type { Preset } from '../../presets/schema';
import { cloneJson, getAt, setAt } from './presetPath';
import { fieldForIssue, GROUPS, nextSpecies, sliderSpan, speciesFields, type FieldSpec, type GroupId, type ModeMemory, type NumberField } from './fields';
import { panelFields } from './fieldRegistry';
// Registers the detector and acquisition (ion-load) controls with the panel.
import './acquisitionFields';

export type EditPhase = 'live' | 'final';

export interface PanelEvents {
  /** The draft changed; `draft` is the panel's working document (clone it before keeping it). */
  onEdit(draft: unknown, phase: EditPhase): void;
}

/** Settings of the view that are not part of the preset. */
export interface ViewSettings {
  /** Ions per run while a control is being dragged. */
  liveIons: number;
}

interface Bound {
  readonly field: FieldSpec;
  readonly controller: Controller;
  window: [number, number] | null;
}

export class ParameterPanel {
  private readonly gui: GUI;
  private readonly folders = new Map<GroupId, GUI>();
  private readonly view: Record<string, unknown> = {};
  private readonly bound = new Map<string, Bound>();
  private speciesFolder: GUI | null = null;
  private speciesBound: Bound[] = [];
  private draftDoc: unknown = {};
  private memory: ModeMemory = new Map();
  private issueNotes: HTMLElement[] = [];
  readonly settings: ViewSettings = { liveIons: 2000 };

  constructor(
    host: HTMLElement,
    private readonly issuesBox: HTMLElement,
    private readonly events: PanelEvents,
  ) {
    this.gui = new GUI({ container: host, injectStyles: false, title: 'Parameters', touchStyles: 0 });
    for (const g of GROUPS) this.folders.set(g.id, this.gui.addFolder(g.title));
    for (const field of panelFields()) this.bound.set(field.key, this.bind(field, this.folders.get(field.group)!));
    const runFolder = this.folders.get('run')!;
    runFolder
      .add(this.settings, 'liveIons', 100, 50_000, 100)
      .name('ions while dragging (view)')
      .onFinishChange(() => this.events.onEdit(this.draftDoc, 'final'));
  }

  /** Show a validated preset (loading, importing, applying tuned values). */
  load(preset: Preset): void {
    this.draftDoc = cloneJson(preset);
    this.memory = new Map();
    this.rebuildSpecies();
    this.refresh();
    this.showIssues([]);
  }

  get draft(): unknown {
    return this.draftDoc;
  }

  private bind(field: FieldSpec, folder: GUI): Bound {
    this.view[field.key] = field.get(this.draftDoc);
    let controller: Controller;
    if (field.kind === 'select') controller = folder.add(this.view, field.key, field.options);
    else controller = folder.add(this.view, field.key);
    controller.name(field.label);
    const entry: Bound = { field, controller, window: null };
    if (field.kind === 'number') {
      const c = controller as NumberController;
      c.step(field.step);
      c.domElement.title = field.hint(this.draftDoc);
      // Typing applies when the value is committed (Enter or leaving the field); dragging runs live.
      c.onChange((v: number) => {
        if (document.activeElement !== c.$input) this.edit(field, v, 'live');
      });
      c.onFinishChange((v: number) => this.edit(field, v, 'final'));
      this.acceptTypedBeyondWindow(entry);
    } else if (field.kind === 'text') {
      controller.onFinishChange((v: string) => this.edit(field, v, 'final'));
    } else {
      controller.onChange((v: string | boolean) => this.edit(field, v, 'final'));
    }
    return entry;
  }

  /**
   * The slider spans a convenient window; a typed value outside it widens the window instead of
   * being clamped, so that every value reaches validation (and an out-of-range one shows as invalid);
   * and a typed value is not rounded to the slider's step.
   */
  private acceptTypedBeyondWindow(entry: Bound): void {
    const c = entry.controller as NumberController;
    c.domElement.addEventListener(
      'blur',
      (event) => {
        if (event.target !== c.$input) return;
        const typed = Number(c.$input.value.trim());
        if (!c.$input.value.trim() || !Number.isFinite(typed)) return;
        if (entry.window) {
          const [lo, hi] = entry.window;
          if (typed < lo || typed > hi) {
            entry.window = [Math.min(lo, typed), Math.max(hi, typed)];
            c.min(entry.window[0]).max(entry.window[1]);
          }
        }
        // The step snaps dragging only: a typed value (a tuned delay of 262.2413 ns) keeps every digit.
        if (c.getValue() !== typed) c.setValue(typed);
      },
      true,
    );
  }

  private edit(field: FieldSpec, value: unknown, phase: EditPhase): void {
    if (field.kind === 'number') field.set(this.draftDoc, value as number);
    else if (field.kind === 'text') field.set(this.draftDoc, value as string);
    else if (field.kind === 'select') field.set(this.draftDoc, value as string, this.memory);
    else field.set(this.draftDoc, value as boolean, this.memory);
    // Switches and choices show or hide other controls; so does giving a species a formula.
    if (field.kind === 'select' || field.kind === 'boolean' || field.key.endsWith('_formula')) this.refresh();
    if (field.key.endsWith('_label')) this.renameSpeciesFolders();
    this.events.onEdit(this.draftDoc, phase);
  }

  /** Values, slider windows and visibility from the draft. */
  private refresh(): void {
    for (const entry of [...this.bound.values(), ...this.speciesBound]) {
      const { field, controller } = entry;
      const value = field.get(this.draftDoc);
      this.view[field.key] = value;
      if (field.kind === 'number') {
        const span = sliderSpan(field as NumberField, value as number);
        const v = value as number;
        if (span && (!entry.window || v < entry.window[0] || v > entry.window[1])) {
          entry.window = span;
          (controller as NumberController).min(span[0]).max(span[1]);
        }
      }
      controller.show(field.visible ? field.visible(this.draftDoc) : true);
      if (field.kind === 'number') controller.domElement.title = (field as NumberField).hint(this.draftDoc); // bounds can follow a mode switch
      controller.updateDisplay();
    }
  }

  private rebuildSpecies(): void {
    this.speciesFolder?.destroy();
    this.speciesBound = [];
    const ions = this.folders.get('ions')!;
    const folder = ions.addFolder('Species');
    this.speciesFolder = folder;
    const list = getAt(this.draftDoc, 'ions.species');
    const count = Array.isArray(list) ? list.length : 0;
    for (let i = 0; i < count; i++) {
      const sub = folder.addFolder(this.speciesTitle(i));
      for (const field of speciesFields(i)) this.speciesBound.push(this.bind(field, sub));
      if (count > 1) sub.add({ remove: () => this.removeSpecies(i) }, 'remove').name('remove this species');
      if (i > 2) sub.close();
    }
    folder.add({ add: () => this.addSpecies() }, 'add').name('add a species');
  }

  private speciesTitle(i: number): string {
    const label = getAt(this.draftDoc, `ions.species[${i}].label`);
    const mz = getAt(this.draftDoc, `ions.species[${i}].mz`);
    return `${i + 1}: ${typeof label === 'string' && label ? label : `m/z ${String(mz)}`}`;
  }

  private renameSpeciesFolders(): void {
    this.speciesFolder?.folders.forEach((f, i) => f.title(this.speciesTitle(i)));
  }

  private addSpecies(): void {
    const list = getAt(this.draftDoc, 'ions.species');
    const next = nextSpecies(this.draftDoc);
    if (Array.isArray(list)) list.push(next);
    else setAt(this.draftDoc, 'ions.species', [next]);
    this.afterSpeciesChange();
  }

  private removeSpecies(i: number): void {
    const list = getAt(this.draftDoc, 'ions.species');
    if (!Array.isArray(list) || list.length <= 1) return;
    list.splice(i, 1);
    this.afterSpeciesChange();
  }

  private afterSpeciesChange(): void {
    this.rebuildSpecies();
    this.refresh();
    this.events.onEdit(this.draftDoc, 'final');
  }

  /** Mark invalid controls with their message; issues without a visible control go to the box above. */
  showIssues(issues: readonly PresetIssue[]): void {
    for (const note of this.issueNotes) note.remove();
    this.issueNotes = [];
    const all = [...this.bound.values(), ...this.speciesBound];
    for (const { controller } of all) {
      controller.domElement.classList.remove('is-invalid');
      controller.domElement.querySelector('input')?.removeAttribute('aria-invalid');
    }
    const loose: PresetIssue[] = [];
    const fields = all.map((b) => b.field);
    for (const issue of issues) {
      const field = fieldForIssue(fields, issue.path);
      const entry = field ? all.find((b) => b.field === field) : undefined;
      if (!entry || (field?.visible && !field.visible(this.draftDoc))) {
        loose.push(issue);
        continue;
      }
      const el = entry.controller.domElement;
      el.classList.add('is-invalid');
      el.querySelector('input')?.setAttribute('aria-invalid', 'true');
      const note = document.createElement('div');
      note.className = 'field-issue';
      note.setAttribute('role', 'alert');
      note.textContent = `${field!.label} ${issue.message}`;
      el.after(note);
      this.issueNotes.push(note);
    }
    this.issuesBox.hidden = issues.length === 0;
    this.issuesBox.replaceChildren();
    if (issues.length) {
      const head = document.createElement('strong');
      head.textContent = `Not run: ${issues.length} problem${issues.length > 1 ? 's' : ''} to fix`;
      this.issuesBox.append(head);
      if (loose.length) {
        const ul = document.createElement('ul');
        for (const issue of loose) {
          const li = document.createElement('li');
          li.textContent = `${issue.path}: ${issue.message}`;
          ul.append(li);
        }
        this.issuesBox.append(ul);
      }
    }
  }

  /** The number controller of a field (tests and keyboard focus). */
  inputOf(key: string): HTMLInputElement | null {
    const entry = this.bound.get(key) ?? this.speciesBound.find((b) => b.field.key === key);
    return entry ? entry.controller.domElement.querySelector('input') : null;
  }

  dispose(): void {
    this.gui.destroy();
  }
}
