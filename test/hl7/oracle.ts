/**
 * ORU^R01 messages built by an independent library (node-hl7-client 3.2.0, its Message builder
 * and batch builders), so that our parser reads what another implementation writes, escapes
 * included. HL7 Version 2.5.1, chapter 7 (ORU^R01 structure: MSH, OBR, OBX..., SPM).
 */
import { Batch, Message } from 'node-hl7-client';

export interface OracleObservation {
  code: string;
  /** OBX-2 value type (NM, CWE, ST, SN). */
  type: string;
  /** OBX-5 components (one for NM/ST; code, text, system for CWE). */
  value: string[];
  flag?: string;
  status?: string;
}

export interface OracleOrder {
  sampleId: string;
  accession: string;
  collected: string;
  reported: string;
  observations: OracleObservation[];
  /** Leave the SPM segment out. */
  noSpm?: boolean;
}

export interface OracleMessage {
  facility?: string;
  controlId: string;
  type?: [string, string];
  processing?: string;
  orders: OracleOrder[];
}

/** The message as node-hl7-client writes it (segments ended by CR). */
export function oracleMessage(spec: OracleMessage): Message {
  const message = new Message({
    messageHeader: {
      msh_9_1: spec.type?.[0] ?? 'ORU',
      msh_9_2: spec.type?.[1] ?? 'R01',
      msh_9_3: `${spec.type?.[0] ?? 'ORU'}_${spec.type?.[1] ?? 'R01'}`,
      msh_10: spec.controlId,
      msh_11_1: (spec.processing ?? 'P') as 'P',
    },
  });
  message.set('MSH.3.1', 'LIMS');
  message.set('MSH.4.1', spec.facility ?? 'BRAHL');
  message.set('MSH.5.1', 'ROPEWATCH');
  message.set('MSH.6.1', 'CLINIC');
  message.set('MSH.7', '20260807120000');
  message.set('MSH.12', '2.5.1');
  spec.orders.forEach((order, orderIndex) => {
    const obr = message.addSegment('OBR');
    obr.set('1', String(orderIndex + 1));
    obr.set('3.1', order.accession);
    obr.set('4.1', 'PANEL');
    obr.set('7.1', order.collected);
    obr.set('22.1', order.reported);
    order.observations.forEach((observation, index) => {
      const obx = message.addSegment('OBX');
      obx.set('1', String(index + 1));
      obx.set('2', observation.type);
      obx.set('3.1', observation.code);
      observation.value.forEach((part, at) => obx.set(`5.${at + 1}`, part));
      if (observation.flag !== undefined) obx.set('8', observation.flag);
      obx.set('11', observation.status ?? 'F');
    });
    if (!order.noSpm) {
      const spm = message.addSegment('SPM');
      spm.set('1', '1');
      spm.set('2.1', order.sampleId);
      spm.set('4.1', 'OF');
      spm.set('17.1', order.collected);
    }
  });
  return message;
}

/** Text of a message built by the library. */
export function oracleText(spec: OracleMessage): string {
  return oracleMessage(spec).toString();
}

/** Several messages in one BHS/BTS batch, as the library writes it. */
export function oracleBatch(specs: readonly OracleMessage[]): string {
  const batch = new Batch();
  batch.start();
  for (const spec of specs) batch.add(oracleMessage(spec));
  batch.end();
  return batch.toString();
}
