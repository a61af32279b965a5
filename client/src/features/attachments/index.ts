// What other features may use from attachments; everything else in this folder is its own business.
export { AttachmentsPanel } from './attachments-section';
