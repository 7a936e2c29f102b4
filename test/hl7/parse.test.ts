/**
 * Our HL7 v2 parser against messages written and read by an independent library
 * (node-hl7-client 3.2.0). Rules: HL7 Version 2.5.1, chapter 2 "Control": 2.5 message
 * construction (MSH-1 field separator, MSH-2 component, repetition, escape and sub-component
 * characters), 2.7 escape sequences (\F\ \S\ \T\ \R\ \E\, \Xhh\, \.br\).
 */
import { Message } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { DEFAULT_ENCODING, escapeText, unescapeText } from '../../src/hl7/escapes.js';
import { Hl7Error } from '../../src/hl7/hl7Error.js';
import { parseMessage, repetitions, segmentLines, valueAt } from '../../src/hl7/parse.js';
import { oracleMessage, oracleText } from './oracle.js';

const parse = (text: string) => parseMessage(segmentLines(text));

const TRICKY = ['a|b', 'c^d', 'e&f', 'g~h', 'back\\slash', 'all |^~\\& five', 'plain'];

describe('HL7 v2 parsing', () => {
  it('reads back every separator character the library escaped (HL7 2.5.1 §2.7: \\F\\ \\S\\ \\T\\ \\R\\ \\E\\)', () => {
    for (const tricky of TRICKY) {
      const text = oracleText({
        controlId: 'C1',
        orders: [
          {
            sampleId: tricky,
            accession: 'A1',
            collected: '20260803',
            reported: '20260806',
            observations: [{ code: 'X', type: 'ST', value: [tricky, 'second'] }],
          },
        ],
      });
      const message = parse(text);
      const obx = message.segments.find((segment) => segment.id === 'OBX')!;
      const spm = message.segments.find((segment) => segment.id === 'SPM')!;
      expect(valueAt(message, obx, 5, 1), tricky).toBe(tricky);
      expect(valueAt(message, obx, 5, 2)).toBe('second');
      expect(valueAt(message, spm, 2, 1), tricky).toBe(tricky);
      // The library's own reading of its text agrees with ours.
      expect(new Message({ text }).get('OBX.5.1').toString()).toBe(tricky);
    }
  });

  it('numbers MSH fields as the standard does (MSH-1 the field separator, MSH-2 the encoding characters)', () => {
    const message = parse(oracleText({ controlId: 'CTRL-77', orders: [] }));
    const msh = message.segments[0]!;
    expect(valueAt(message, msh, 1)).toBe('|');
    expect(valueAt(message, msh, 2)).toBe('^~\\&');
    expect(valueAt(message, msh, 10)).toBe('CTRL-77');
    expect(`${valueAt(message, msh, 9, 1)}^${valueAt(message, msh, 9, 2)}`).toBe('ORU^R01');
    const oracle = new Message({ text: oracleText({ controlId: 'CTRL-77', orders: [] }) });
    expect(oracle.get('MSH.10').toString()).toBe('CTRL-77');
    expect(oracle.get('MSH.4.1').toString()).toBe(valueAt(message, msh, 4));
  });

  it('reads repetitions, components and sub-components with the encoding characters MSH-2 declares, not fixed ones', () => {
    // The same message with # as field, $ component, % repetition, * escape, ! sub-component.
    const text = ['MSH#$%*!#LIMS#BRAHL##', 'OBX#1#ST#CODE$Text##v1a!v1b$v1c%v2*F*x*S*y#'].join('\r');
    const message = parse(text);
    expect(message.enc).toEqual({ field: '#', component: '$', repetition: '%', escape: '*', subComponent: '!' });
    const obx = message.segments[1]!;
    expect(repetitions(message, obx, 5)).toHaveLength(2);
    expect(valueAt(message, obx, 5, 1, 1)).toBe('v1a');
    expect(valueAt(message, obx, 5, 1, 2)).toBe('v1b');
    expect(valueAt(message, obx, 5, 2)).toBe('v1c');
    expect(valueAt(message, obx, 5, 1, 1, 1)).toBe('v2#x$y');
    expect(valueAt(message, obx, 3, 2)).toBe('Text');
  });

  it('decodes hexadecimal data and line breaks, and drops formatting sequences (2.5.1 §2.7.2 to 2.7.4)', () => {
    expect(unescapeText('A\\X4142\\C', DEFAULT_ENCODING)).toBe('AABC');
    expect(unescapeText('one\\.br\\two', DEFAULT_ENCODING)).toBe('one\ntwo');
    expect(unescapeText('\\H\\bold\\N\\', DEFAULT_ENCODING)).toBe('bold');
    expect(unescapeText('unclosed \\F', DEFAULT_ENCODING)).toBe('unclosed \\F');
  });

  it('escapes text so that unescaping gives it back', () => {
    for (const tricky of TRICKY)
      expect(unescapeText(escapeText(tricky, DEFAULT_ENCODING), DEFAULT_ENCODING)).toBe(tricky);
  });

  it('takes CR, CR LF and LF between segments (files that passed through other systems)', () => {
    const text = oracleText({
      controlId: 'C',
      orders: [
        {
          sampleId: 'S1',
          accession: 'A',
          collected: '20260803',
          reported: '20260804',
          observations: [{ code: 'X', type: 'NM', value: ['31'] }],
        },
      ],
    });
    for (const separator of ['\r', '\r\n', '\n']) {
      const message = parse(text.split('\r').join(separator));
      expect(message.segments.map((segment) => segment.id)).toEqual(['MSH', 'OBR', 'OBX', 'SPM']);
      expect(message.segments.map((segment) => segment.line)).toEqual([1, 2, 3, 4]);
    }
  });

  it.each([
    ['three encoding characters', 'MSH|^~\\|LIMS', 2],
    ['five encoding characters', 'MSH|^~\\&#|LIMS', 2],
    ['an encoding character twice', 'MSH|^^\\&|LIMS', 2],
    ['a letter as encoding character', 'MSH|^~\\A|LIMS', 2],
    ['a letter as field separator', 'MSHA^~\\&ALIMS', 1],
  ])('refuses %s in MSH-2 as malformed-message, naming the field', (_label, header, field) => {
    const error = (() => {
      try {
        parse(`${header}\rOBR|1`);
      } catch (caught) {
        return caught;
      }
      return undefined;
    })();
    expect(error).toBeInstanceOf(Hl7Error);
    expect((error as Hl7Error).code).toBe('malformed-message');
    expect((error as Hl7Error).location).toMatchObject({ segment: 'MSH', field });
  });

  it('refuses a message that does not begin with MSH, and a line that is not a segment', () => {
    expect(() => parse('OBR|1\rOBX|1')).toThrow(/MSH/);
    const message = oracleMessage({ controlId: 'C', orders: [] }).toString();
    try {
      parse(`${message}\rthis is not a segment`);
      expect.unreachable();
    } catch (error) {
      expect((error as Hl7Error).code).toBe('malformed-message');
      expect((error as Hl7Error).location.line).toBe(2);
    }
  });

  it('refuses a field over 65,536 characters (the longest HL7 text field) as field-too-long', () => {
    const text = `${oracleText({ controlId: 'C', orders: [] })}\rNTE|1||${'x'.repeat(70_000)}`;
    try {
      parse(text);
      expect.unreachable();
    } catch (error) {
      expect((error as Hl7Error).code).toBe('field-too-long');
      expect((error as Hl7Error).location).toMatchObject({ segment: 'NTE', field: 3 });
    }
  });
});
