/**
 * The time series of a run (the replay and the cell page's charts): evenly spaced samples of the
 * bodies, the momentum, the energies, the deepest overlap and, with friction, the stick/slide state.
 */
import type { TimeSeries } from "./types";
import { GRAVITY_J, KINETIC_J, energyTerms, rotationalEnergyJ, type Bodies } from "./bodies";
import type { ContactField } from "./contact-field";

/**
 * Contacts listed per sample in a friction run's series (the replay's stick/slide marks): enough for
 * a pile of a few dozen bodies; a larger pile lists the first ones in canonical order (the counts
 * stay complete), so a 2,000-sample series stays a few megabytes at most.
 */
export const SERIES_MAX_CONTACTS = 64;

/** Evenly spaced samples over the run's steps, at most `maxSamples`. */
export class SeriesRecorder {
  readonly series: TimeSeries;
  private readonly maxSamples: number;
  private readonly totalSteps: number;
  private sampleIndex = 0;
  /** The field of a run with friction (spin and stick/slide are recorded), else null. */
  private readonly frictionField: ContactField | null;
  /** `energyTerms`' output, reused by every sample. */
  private readonly energy = new Float64Array(2);

  constructor(bodyCount: number, maxSamples: number, totalSteps: number, frictionField: ContactField | null) {
    this.maxSamples = maxSamples;
    this.totalSteps = totalSteps;
    this.frictionField = frictionField;
    const bodies: TimeSeries["bodies"] = [];
    for (let i = 0; i < bodyCount; i++) bodies.push(frictionField ? { xM: [], yM: [], pxNs: [], pyNs: [], angleRad: [], omegaRadPerS: [] } : { xM: [], yM: [], pxNs: [], pyNs: [] });
    this.series = { tS: [], bodies, totalPxNs: [], totalPyNs: [], kineticJ: [], potentialJ: [], totalJ: [], maxOverlapM: [] };
    if (frictionField) {
      this.series.slidingContacts = [];
      this.series.stickingContacts = [];
      this.series.slipMPerS = [];
      this.series.frictionContacts = [];
    }
  }

  private stepOfSample(index: number): number {
    if (this.maxSamples === 1) return 0;
    return Math.floor((index * this.totalSteps) / (this.maxSamples - 1));
  }

  /** Step of the next sample still to record (Infinity when all are recorded). */
  nextSampleStep(): number {
    return this.sampleIndex < this.maxSamples ? this.stepOfSample(this.sampleIndex) : Infinity;
  }

  /** Records the current state if one or more samples fall on `step` (once, even if several do). */
  recordUpTo(step: number, bodies: Bodies, contactPotentialJ: number, gravity: number, maxOverlapM: number, h: number): void {
    if (this.nextSampleStep() > step) return;
    while (this.nextSampleStep() <= step) this.sampleIndex++;
    const series = this.series;
    series.tS.push(step * h);
    let totalPx = 0;
    let totalPy = 0;
    for (let i = 0; i < bodies.count; i++) {
      const track = series.bodies[i];
      const px = bodies.mass[i] * bodies.vx[i];
      const py = bodies.mass[i] * bodies.vy[i];
      track.xM.push(bodies.x[i]);
      track.yM.push(bodies.y[i]);
      track.pxNs.push(px);
      track.pyNs.push(py);
      if (track.angleRad && track.omegaRadPerS) {
        track.angleRad.push(bodies.angle[i]);
        track.omegaRadPerS.push(bodies.omega[i]);
      }
      totalPx += px;
      totalPy += py;
    }
    series.totalPxNs.push(totalPx);
    series.totalPyNs.push(totalPy);
    energyTerms(bodies, gravity, this.energy);
    const kinetic = this.energy[KINETIC_J] + rotationalEnergyJ(bodies);
    if (this.frictionField && series.slidingContacts && series.stickingContacts) {
      const tangential = this.frictionField.tangential;
      series.slidingContacts.push(tangential.slidingContacts);
      series.stickingContacts.push(tangential.stickingContacts);
      series.slipMPerS?.push(tangential.maxSlipMPerS);
      const contacts: number[] = [];
      tangential.listContacts(contacts, SERIES_MAX_CONTACTS);
      series.frictionContacts?.push(contacts);
    }
    const potential = contactPotentialJ + this.energy[GRAVITY_J];
    series.kineticJ.push(kinetic);
    series.potentialJ.push(potential);
    series.totalJ.push(kinetic + potential);
    series.maxOverlapM.push(maxOverlapM);
  }
}
