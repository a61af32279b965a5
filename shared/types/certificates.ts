import type { GaugeUnit } from '../calc/pressure';
import type { CertificateState } from '../isolations/certificate-states';
import type { PermitState } from '../permit/states';
import type { Moment } from './moment';

/** A certificate as the list shows it. */
export interface IsolationCertificateSummary<Time extends Moment = string> {
  id: string;
  number: string;
  state: CertificateState;
  pipelineId: string;
  pipelineCode: string;
  pipelineName: string;
  /** The isolated section of the line, between its innermost isolating devices. */
  fromPosition: number;
  toPosition: number;
  issuedAt: Time;
  issuedByName: string;
  longTerm: boolean;
  longTermReason: string | null;
  recheckHours: number | null;
  nextRecheckDue: Time | null;
  /** A long-term isolation whose re-check is past due. */
  recheckOverdue: boolean;
  /** What the last re-check found wrong, until a passing re-check clears it. */
  problem: string | null;
  problemAt: Time | null;
  returnedAt: Time | null;
  /** Energy-isolating devices still in place. */
  devicesInPlace: number;
  /** Permits relying on the certificate now. */
  permitsRelying: number;
}

/** One isolation the certificate covers (a step of the permit that made it). */
export interface CertificateStep<Time extends Moment = string> {
  id: string;
  permitId: string;
  label: string;
  kind: string;
  position: number;
  status: string;
  isolatingDevice: boolean;
  lockNumber: string | null;
  tagNumber: string | null;
  appliedByName: string | null;
  appliedAt: Time | null;
  verifiedByName: string | null;
  removedAt: Time | null;
}

/** A permit that relies, or relied, on the certificate. */
export interface CertificatePermitLink<Time extends Moment = string> {
  permitId: string;
  number: string;
  title: string;
  state: PermitState;
  fromPosition: number;
  toPosition: number;
  linkedAt: Time;
  releasedAt: Time | null;
  /** The permit whose isolations made the certificate. */
  issuedFor: boolean;
}

/** The hold test that proved the section dead when the certificate was issued. */
export interface CertificateProving<Time extends Moment = string> {
  at: string;
  unit: GaugeUnit;
  startReading: number;
  endReading: number | null;
  holdMinutes: number;
  endedAt: Time | null;
  endedByName: string | null;
  result: 'running' | 'proved' | 'failed';
}

/** One re-check of a long-term isolation. */
export interface IsolationRecheck<Time extends Moment = string> {
  id: string;
  checkedAt: Time;
  checkedByName: string;
  locksAndTagsIntact: boolean;
  valvesStillClosed: boolean;
  gaugeReading: number;
  gaugeUnit: GaugeUnit;
  maxPressure: number;
  maxPressureUnit: GaugeUnit;
  result: 'pass' | 'fail';
  failure: string | null;
  notes: string | null;
}

/** What the rules allow on the certificate now (who may is CASL's), each with the reasons it is blocked. */
export interface CertificateActionState {
  allowed: boolean;
  reasons: string[];
}

/** One certificate with everything its page shows. */
export interface IsolationCertificate<Time extends Moment = string> extends IsolationCertificateSummary<Time> {
  issuedForPermitId: string;
  issuedSignedName: string;
  longTermAt: Time | null;
  longTermByName: string | null;
  returnedByName: string | null;
  steps: CertificateStep<Time>[];
  permits: CertificatePermitLink<Time>[];
  proving: CertificateProving<Time> | null;
  rechecks: IsolationRecheck<Time>[];
  /** The site's limit a re-check's gauge reading is held to. */
  recheckLimit: { maxPressure: number; unit: GaugeUnit };
  actions: { markLongTerm: CertificateActionState; recordRecheck: CertificateActionState; return: CertificateActionState };
}

/** The certificate a permit works under, as the permit page shows it in one line. */
export interface PermitCertificateRef {
  id: string;
  number: string;
  state: CertificateState;
  longTerm: boolean;
  problem: string | null;
}
