import { describe, expect, it } from 'vitest';
import { documentFileName, formatSize } from './documents';

describe('documentFileName', () => {
	it('keeps a plain title and adds .pdf', () => {
		expect(documentFileName('Antechamber transfer SOP v2.1')).toBe(
			'Antechamber transfer SOP v2.1.pdf'
		);
	});

	it('folds accents and replaces characters a quoted filename cannot carry', () => {
		expect(documentFileName('Réglage "O₂" / H₂O: capteurs')).toBe(
			'Reglage -O2- - H2O- capteurs.pdf'
		);
		expect(documentFileName('a\r\nb\\c;d')).toBe('a b-c-d.pdf');
	});

	it('never gives an empty or dot-led name, and stays short', () => {
		expect(documentFileName('…')).toBe('document.pdf');
		expect(documentFileName('../../etc/passwd')).toBe('etc-passwd.pdf');
		expect(documentFileName('x'.repeat(300))).toBe(`${'x'.repeat(100)}.pdf`);
	});
});

describe('formatSize', () => {
	it('reads in B, KB and MB (binary multiples)', () => {
		expect(formatSize(820)).toBe('820 B');
		expect(formatSize(14 * 1024 + 100)).toBe('14 KB');
		expect(formatSize(3.24 * 1024 * 1024)).toBe('3.2 MB');
		expect(formatSize(20 * 1024 * 1024)).toBe('20 MB');
	});
});
