import QRCode from 'qrcode';
import type { AuditCheckpoint } from '@shared/types/audit';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { checkpointFile, checkpointForPrint, checkpointText } from './checkpoints';

/** What a printed permit or dossier carries of the audit trail's signed checkpoint: the text and a QR code of the checkpoint file. */
export interface CheckpointPrint {
  checkpoint: AuditCheckpoint<Date>;
  text: string;
  qr: Buffer;
}

export async function checkpointPrintBlock(deps: AppDeps, tenantId: string): Promise<CheckpointPrint> {
  const checkpoint = await checkpointForPrint(deps, tenantId);
  const { timeZone } = await withTenant(deps.sequelize, tenantId, () => loadTenantSettings(deps.sequelize, tenantId));
  const qr = await QRCode.toBuffer(JSON.stringify(checkpointFile(checkpoint)), { errorCorrectionLevel: 'M', margin: 1, width: 220 });
  return { checkpoint, text: checkpointText(checkpoint, timeZone), qr };
}

/** Draws the block where the document stands: a heading, the QR code and the text beside it. */
export function drawCheckpoint(doc: PDFKit.PDFDocument, block: CheckpointPrint, margin: number) {
  const width = doc.page.width - 2 * margin;
  const size = 110;
  if (doc.y + size + 40 > doc.page.height - doc.page.margins.bottom) doc.addPage();
  doc.moveDown(0.6).fontSize(12).fillColor('#10252f').text('Signed audit checkpoint', margin, doc.y, { width });
  const top = doc.y + 4;
  doc.image(block.qr, margin, top, { width: size, height: size });
  doc
    .fontSize(8.5)
    .fillColor('#14202b')
    .text(
      `${block.text}\nThe QR code holds the signed checkpoint. Holdpoint signed the end of the audit trail when this copy was printed; anyone can check it with the public key and "npm run audit:verify".`,
      margin + size + 10,
      top,
      { width: width - size - 10 },
    );
  doc.y = Math.max(doc.y, top + size) + 6;
  doc.x = margin;
  doc.fontSize(9.5);
}
