import type { VerificationView } from '../../../../shared/api/cases';

/** The server's check of a stored run in a few words, and whether it stands (for colour and icon). */
export interface VerificationWords {
  readonly text: string;
  readonly tone: 'ok' | 'bad' | 'pending';
}

export function verificationWords(v: VerificationView): VerificationWords {
  switch (v.state) {
    case 'pending':
      return { text: 'Server check running', tone: 'pending' };
    case 'verified':
      return { text: 'Verified by the server', tone: 'ok' };
    case 'unreproduced': {
      if (v.failure) return { text: 'Unreproduced: the server’s rerun failed', tone: 'bad' };
      const n = v.differences.length;
      if (n === 0) return { text: 'Unreproduced: numbers agree, digest differs', tone: 'bad' };
      return { text: `Unreproduced: ${n} ${n === 1 ? 'number differs' : 'numbers differ'}`, tone: 'bad' };
    }
  }
}
