// What other features may use from certificates; everything else in this folder is its own business.
export { PermitCertificateLine } from './components/permit-certificate-line';
export { LongTermRechecks } from './components/long-term-rechecks';
