import type { Rng } from './prng.js';

/**
 * Speed trace of one driving leg, stepped like the thermal model: a chain of road segments
 * (urban, arterial, highway), each with a cruise speed, a length, a road grade and an optional
 * stop at its end (traffic light, junction, bus stop), driven with bounded acceleration and
 * braking; now and then congestion: a stop-and-go crawl for some minutes. Speeds in m/s, accelerations in m/s², grade as rise/run.
 */

export type RoadKind = 'urban' | 'arterial' | 'highway';

export interface RoadSegmentSpec {
  /** Probability weight of choosing this kind of segment. */
  weight: number;
  /** Cruise speed range, km/h. */
  speedKph: readonly [number, number];
  /** Segment length range, m. */
  lengthM: readonly [number, number];
  /** Probability that the segment ends in a stop. */
  stopChance: number;
  /** Standing time at that stop with the engine idling, s. */
  stopS: readonly [number, number];
  /** Standard deviation of the road grade, rise/run. */
  gradeSd: number;
}

export interface DriveProfile {
  roads: Readonly<Record<RoadKind, RoadSegmentSpec>>;
  /** Comfortable acceleration from standstill, m/s². */
  accelMps2: number;
  /** Normal braking deceleration, m/s². */
  decelMps2: number;
  /** Chance that a new segment runs into congestion (stop-and-go crawl). */
  jamChance: number;
  /** How long congestion lasts, s. */
  jamS: readonly [number, number];
}

const ROAD_KINDS: readonly RoadKind[] = ['urban', 'arterial', 'highway'];
/** Largest road grade generated, rise/run. */
const MAX_GRADE = 0.07;
/** Length of a stretch of constant grade, m (hills come and go within a segment). */
const GRADE_STRETCH_M: readonly [number, number] = [300, 1500];
/** Crawl in congestion: speed range, m/s, distance between stops, m, standing time, s. */
const CRAWL_MPS: readonly [number, number] = [1.5, 4];
const CRAWL_M: readonly [number, number] = [15, 80];
const CRAWL_STOP_S: readonly [number, number] = [5, 30];
/** How often the driver's cruise speed wanders, s, and by how much (sd), m/s. */
const CRUISE_WANDER_EVERY_S = 15;
const CRUISE_WANDER_SD_MPS = 0.8;

export class DriveCycle {
  private readonly profile: DriveProfile;
  private readonly rng: Rng;
  private readonly totalWeight: number;
  speedMps = 0;
  accelMps2 = 0;
  grade = 0;
  /** Spread of road grades × the profile's (a hilly route on some days); 1 = usual. */
  gradeScale = 1;
  /** True once the leg's driving time is over and the vehicle has stopped. */
  done = true;
  private elapsedS = 0;
  private targetS = 0;
  private finishing = false;
  private dwellS = 0;
  private remainM = 0;
  private baseMps = 0;
  private cruiseMps = 0;
  private endsWithStop = false;
  private stopS = 0;
  private wanderS = 0;
  private kind: RoadKind = 'urban';
  private gradeLeftM = 0;
  private jamLeftS = 0;

  constructor(profile: DriveProfile, rng: Rng) {
    this.profile = profile;
    this.rng = rng;
    this.totalWeight = ROAD_KINDS.reduce((s, k) => s + profile.roads[k].weight, 0);
  }

  /** Starts a leg of about `driveS` seconds, from standstill. */
  startLeg(driveS: number): void {
    this.elapsedS = 0;
    this.targetS = driveS;
    this.finishing = false;
    this.done = false;
    this.speedMps = 0;
    this.dwellS = 0;
    this.newSegment();
  }

  /** Advances the trace by dt seconds. */
  step(dtS: number): void {
    if (this.done) return;
    this.elapsedS += dtS;
    this.jamLeftS -= dtS;
    if (this.dwellS > 0) {
      this.speedMps = 0;
      this.accelMps2 = 0;
      this.dwellS -= dtS;
      if (this.dwellS <= 0) {
        if (this.finishing) this.done = true;
        else this.newSegment();
      }
      return;
    }
    const p = this.profile;
    let v = this.speedMps;
    if (!this.finishing && this.elapsedS >= this.targetS) {
      this.finishing = true;
      this.endsWithStop = true;
      this.stopS = dtS;
      this.remainM = Math.min(this.remainM, ((v * v) / (2 * p.decelMps2)) * 1.3 + 30);
    }
    this.wanderS -= dtS;
    if (this.wanderS <= 0) {
      this.wanderS = CRUISE_WANDER_EVERY_S;
      this.cruiseMps = Math.max(2, this.baseMps + CRUISE_WANDER_SD_MPS * this.rng.normal());
    }
    let a: number;
    if (this.endsWithStop && this.remainM <= (v * v) / (2 * p.decelMps2) + v * dtS) {
      a = this.remainM > 0.5 ? -(v * v) / (2 * this.remainM) : -v / dtS;
    } else {
      const dv = this.cruiseMps - v;
      // Acceleration fades with speed (power limit); gentle approach to the cruise speed.
      const aMax = p.accelMps2 * (1 - v / (this.baseMps * 1.6 + 5));
      a = dv > 0 ? Math.min(aMax, dv / 4) : Math.max(-p.decelMps2, dv / 4);
    }
    let vNew = v + a * dtS;
    if (vNew < 0) vNew = 0;
    const travelledM = 0.5 * (v + vNew) * dtS;
    this.remainM -= travelledM;
    this.gradeLeftM -= travelledM;
    if (this.gradeLeftM <= 0) this.newGrade();
    v = vNew;
    this.speedMps = v;
    this.accelMps2 = a;
    if (this.endsWithStop && (v < 0.5 || this.remainM <= 0) && this.remainM < 10) {
      this.speedMps = 0;
      this.accelMps2 = 0;
      this.dwellS = this.stopS;
    } else if (!this.endsWithStop && this.remainM <= 0) {
      this.newSegment();
    }
  }

  private newSegment(): void {
    const rng = this.rng;
    if (this.jamLeftS <= 0 && rng.chance(this.profile.jamChance))
      this.jamLeftS = rng.uniform(this.profile.jamS[0], this.profile.jamS[1]);
    if (this.jamLeftS > 0) {
      this.baseMps = rng.uniform(CRAWL_MPS[0], CRAWL_MPS[1]);
      this.cruiseMps = this.baseMps;
      this.remainM = rng.uniform(CRAWL_M[0], CRAWL_M[1]);
      this.endsWithStop = true;
      this.stopS = rng.uniform(CRAWL_STOP_S[0], CRAWL_STOP_S[1]);
      return;
    }
    let r = rng.next() * this.totalWeight;
    let kind: RoadKind = 'urban';
    for (const k of ROAD_KINDS) {
      kind = k;
      r -= this.profile.roads[k].weight;
      if (r < 0) break;
    }
    const s = this.profile.roads[kind];
    this.kind = kind;
    this.baseMps = rng.uniform(s.speedKph[0], s.speedKph[1]) / 3.6;
    this.cruiseMps = this.baseMps;
    this.wanderS = CRUISE_WANDER_EVERY_S;
    this.remainM = rng.uniform(s.lengthM[0], s.lengthM[1]);
    this.endsWithStop = rng.chance(s.stopChance);
    this.stopS = rng.uniform(s.stopS[0], s.stopS[1]);
    this.newGrade();
  }

  private newGrade(): void {
    const rng = this.rng;
    const g = this.profile.roads[this.kind].gradeSd * this.gradeScale * rng.normal();
    this.grade = g > MAX_GRADE ? MAX_GRADE : g < -MAX_GRADE ? -MAX_GRADE : g;
    this.gradeLeftM = rng.uniform(GRADE_STRETCH_M[0], GRADE_STRETCH_M[1]);
  }

  /** Kind of road being driven (for diagnostics). */
  roadKind(): RoadKind {
    return this.kind;
  }
}
