/**
 * The states of an isolation certificate (HSE HSG253, HSG250), written once for the screens, the
 * services and the SQL (passed in as a parameter): live while its isolations protect someone, returned
 * once no permit relies on it and its isolations are off.
 */
export const certificateStates = ['live', 'returned'] as const;
export type CertificateState = (typeof certificateStates)[number];
export const certificateStateLabels: Record<CertificateState, string> = { live: 'Live', returned: 'Returned' };

/** The one state in which a certificate's isolations protect the permits that rely on it. */
export const liveCertificateState: CertificateState = 'live';
/** What a certificate becomes once it is handed back. */
export const returnedCertificateState: CertificateState = 'returned';

export const isCertificateLive = (certificate: { state: CertificateState }) => certificate.state === liveCertificateState;
