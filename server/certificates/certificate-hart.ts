/**
 * The certificate's HART section, drawn only from the frozen record's `hart`: the device's identity
 * (commands 0 and 13), its configuration as found and as left (command 15), how a disagreement with
 * the register was resolved, and every command sent to it that moves or changes it — command number,
 * value sent, response, who and when — with the trims' verification readings.
 */
import type { FrozenHart, HartConfigView } from '../../shared/schemas/hart-job';
import type { CertificateData } from './certificate-data';
import { fitToLatin } from './fonts';
import { COLOR, CONTENT_W, dateTime, num, unitLabel, type Column, type Writer } from './pdf-writer';

const hex = (n: number | null | undefined, digits: number) => (n === null || n === undefined ? '—' : `0x${n.toString(16).toUpperCase().padStart(digits, '0')}`);

function configCells(c: HartConfigView | undefined): string[] {
  if (!c) return ['—', '—', '—', '—'];
  return [
    `${num(c.lrv, 4)} to ${num(c.urv, 4)} ${c.unit ? unitLabel(c.unit) : `(unit code ${c.unitCode})`}`,
    c.transferFunction,
    `${num(c.dampingS, 2)} s`,
    c.writeProtect ? 'On' : 'Off',
  ];
}

/** Response code 0 is success; others by number (their words are in the audit trail). */
function response(w: FrozenHart['writes'][number]): string {
  if (w.outcome === 'ok') return w.responseCode ? `OK (code ${w.responseCode})` : 'OK';
  return w.error ? `Refused: ${w.error}` : `Refused (code ${w.responseCode ?? '—'})`;
}

export function hartSection(w: Writer, data: CertificateData, zone?: string): void {
  const h = data.hart;
  if (!h) return;
  w.heading('HART device', 140);
  const id = h.asFound?.identity ?? h.asLeft?.identity;
  if (id) {
    w.facts([
      ['Manufacturer id', hex(id.manufacturerId, 4), true],
      ['Device type', hex(id.expandedDeviceType, 4), true],
      ['Device id', hex(id.deviceId, 6), true],
      ['HART tag', fitToLatin(id.tag || '(blank)'), true],
      ['Descriptor', fitToLatin(id.descriptor || '(blank)')],
      ['Revisions', `universal ${id.universalRevision}, device ${id.deviceRevision}, software ${id.softwareRevision}`],
    ]);
  }
  const found = configCells(h.asFound?.config);
  const left = configCells(h.asLeft?.config ?? h.asFound?.config);
  const labels = ['Range', 'Transfer function', 'Damping', 'Write protect'];
  const cfgCols: Column[] = [
    { header: 'Configuration', width: 120 },
    { header: 'As found', width: 170 },
    { header: 'As left', width: CONTENT_W - 290 },
  ];
  w.table(cfgCols, labels.map((l, i) => [{ text: l }, { text: fitToLatin(found[i]!) }, { text: fitToLatin(left[i]!) }]));
  if (!h.asLeft) w.paragraph('As left: not read again after the as-found reading; shown as found.', { color: COLOR.muted, size: 7.5 });
  if (h.resolution) {
    const what = h.resolution.kind === 'register-corrected' ? 'The register was corrected to the device' : 'The device was recorded as found';
    w.paragraph(fitToLatin(`Check against the register: ${h.resolution.mismatches.map((m) => m.message).join('; ')}. ${what} by ${h.resolution.byName}, ${dateTime(h.resolution.at, zone)}: "${h.resolution.reason}".`));
  } else if (h.asFound) {
    w.paragraph(h.mismatches.length ? fitToLatin(`Check against the register: ${h.mismatches.map((m) => m.message).join('; ')}.`) : 'Tag, range, unit and transfer function agreed with the register.');
  }
  if (!h.writes.length) {
    w.paragraph('No command that changes the device or its output was sent.');
    return;
  }
  const cols: Column[] = [
    { header: 'Time', width: 112 },
    { header: 'Cmd', width: 30, align: 'right', mono: true },
    { header: 'Command', width: 130 },
    { header: 'Value sent', width: 95, mono: true },
    { header: 'Response', width: 70 },
    { header: 'By', width: CONTENT_W - 437 },
  ];
  w.table(
    cols,
    h.writes.map((x) => [
      { text: dateTime(x.at, zone) },
      { text: String(x.command) },
      { text: fitToLatin(x.name) },
      { text: fitToLatin(x.value ?? '—') },
      { text: fitToLatin(response(x)) },
      { text: fitToLatin(x.byName) },
    ]),
    7.5,
  );
  const verify = h.trims.filter((t) => t.kind === 'output-trim' && t.status === 'done').at(-1)?.readings.filter((r) => r.stage === 'verify');
  if (verify?.length) {
    w.paragraph(`Loop current verified after the trim: ${verify.map((r) => `${num(r.fixedMa, 0)} mA read ${num(r.meterMa, 4)} mA (${num(r.errorMa, 4, true)})`).join('; ')}.`);
  }
  const aborted = h.trims.filter((t) => t.status !== 'done' && t.status !== 'running');
  for (const t of aborted) w.paragraph(fitToLatin(`${t.kind === 'output-trim' ? 'Output trim' : 'Zero trim'} ${t.status}: ${t.error ?? ''}; ${t.fixedMa === null ? 'the loop was released from fixed current' : 'fixed current may not have been left'}.`), { color: COLOR.muted, size: 7.5 });
}
