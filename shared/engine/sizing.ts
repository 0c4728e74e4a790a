import type { CaseParams } from '../case/case-schema';
import { amplitudeForMeanSquare, averagedLowerFrequency } from './averaged';
import { assertCase } from '../case/validate';
import { bodyProperties } from './body';
import { driveKinematics, type DriveKinematics } from './drive';
import { portable } from './portable-math';

const { cos, hypot, sin } = portable;

/** A shaker's rated envelope (all optional limits are peak values except the stroke). */
export interface ShakerEnvelope {
  /** N: rated sine force */
  maxForce: number;
  /** m: peak-to-peak stroke between stops */
  maxStroke: number;
  /** m/s: peak velocity */
  maxVelocity: number;
  /** kg: armature, table and fixture moving with the pivot */
  movingMass: number;
}

export interface SizingOptions {
  /** wanted <s'^2> / (g L) (averaged-theory stiffness ratio); default 1.5 */
  targetRatio?: number;
  shaker?: ShakerEnvelope;
}

export interface ShakerCheck {
  /** N: (moving mass + body mass) x peak acceleration */
  force: number;
  /** m */
  stroke: number;
  /** m/s */
  velocity: number;
  /** used share of each rating (1 = at the limit) */
  forceUse: number;
  strokeUse: number;
  velocityUse: number;
  fits: boolean;
}

export interface DriveSizing {
  /** m/s^2 and in g */
  peakAcceleration: number;
  peakAccelerationG: number;
  /** m/s */
  peakVelocity: number;
  /** m: peak-to-peak */
  stroke: number;
  /** N: pivot force on the body held upright at rest, at the drive's extreme accelerations */
  pivotForcePeak: number;
  /** averaged-theory stiffness ratio <s'^2> / (g L) of the case as it stands */
  stiffnessRatio: number;
  targetRatio: number;
  /** m: crank radius (or amplitude) giving the target ratio at the case's frequency, null if unreachable */
  amplitudeForTarget: number | null;
  /** Hz and rev/min: drive (motor) speed giving the target ratio at the case's amplitude */
  frequencyForTarget: number | null;
  motorSpeedRpm: number | null;
  shaker: ShakerCheck | null;
}

/**
 * N: pivot force on a body held upright at rest, |m (s'' e + g up)|, at the drive's largest and smallest s''
 * (the drive line e at beta from the vertical).
 */
export function pivotReactionPeak(bodyMass: number, beta: number, g: number, peakAcceleration: number): number {
  const forceAt = (acc: number) => bodyMass * hypot(acc * sin(beta), acc * cos(beta) + g);
  return Math.max(forceAt(peakAcceleration), forceAt(-peakAcceleration));
}

/**
 * A shaker's load for a drive: force = (moving mass + body mass) x peak acceleration (the rated sine force is
 * compared with it: vibration-testing practice), stroke and peak velocity, each as a share of its rating. A rating of
 * Infinity is no limit (its use is 0).
 */
export function shakerCheck(
  kin: Pick<DriveKinematics, 'peakAcceleration' | 'peakVelocity' | 'stroke'>, bodyMass: number, s: ShakerEnvelope,
): ShakerCheck {
  const force = (s.movingMass + bodyMass) * kin.peakAcceleration;
  const forceUse = force / s.maxForce;
  const strokeUse = kin.stroke / s.maxStroke;
  const velocityUse = kin.peakVelocity / s.maxVelocity;
  return { force, stroke: kin.stroke, velocity: kin.peakVelocity, forceUse, strokeUse, velocityUse, fits: forceUse <= 1 && strokeUse <= 1 && velocityUse <= 1 };
}

/**
 * Drive sizing from the case's drive and body.
 *
 * Method (vibration-testing practice): peak velocity and acceleration of the actual waveform (2 pi f a and
 * (2 pi f)^2 a for a sine); pivot force on a body at the upright, |m (s'' e + g up)| at the largest and smallest s'';
 * shaker force = (moving mass + body mass) x peak acceleration. Crank radius and motor speed for a target margin
 * come from averaged theory (<s'^2> = ratio x g L; Kapitza, Landau & Lifshitz section 30), so they are design
 * estimates: the exact limits come from the Floquet analysis. Throws an Error naming every offending field for an
 * invalid case.
 */
export function driveSizing(input: CaseParams, options: SizingOptions = {}): DriveSizing {
  const params = assertCase(input);
  const g = params.gravity;
  const body = bodyProperties(params.body, g);
  const L = body.equivalentLength;
  const steadyDrive = { ...params.drive, ramp: undefined };
  const kin = driveKinematics(steadyDrive);
  const pivotForcePeak = pivotReactionPeak(body.mass, params.drive.direction, g, kin.peakAcceleration);
  const targetRatio = options.targetRatio ?? 1.5;
  const stiffnessRatio = kin.meanSquareVelocity / (g * L);

  const amplitudeForTarget = amplitudeForMeanSquare(steadyDrive, params.drive.frequency, targetRatio * g * L);
  const lower = averagedLowerFrequency(params, params.drive.amplitude);
  const frequencyForTarget = lower === null ? null : lower * Math.sqrt(targetRatio);

  const shaker = options.shaker ? shakerCheck(kin, body.mass, options.shaker) : null;
  return {
    peakAcceleration: kin.peakAcceleration,
    peakAccelerationG: kin.peakAcceleration / g,
    peakVelocity: kin.peakVelocity,
    stroke: kin.stroke,
    pivotForcePeak,
    stiffnessRatio,
    targetRatio,
    amplitudeForTarget,
    frequencyForTarget,
    motorSpeedRpm: frequencyForTarget === null ? null : frequencyForTarget * 60,
    shaker,
  };
}
