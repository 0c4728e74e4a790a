import { safeReturnUrl } from './return-url';

describe('safeReturnUrl', () => {
  it('follows a path inside the app', () => {
    expect(safeReturnUrl('/labs/lab-1?tab=members')).toBe('/labs/lab-1?tab=members');
  });

  it('refuses addresses that would leave the app', () => {
    expect(safeReturnUrl('https://elsewhere.example')).toBe('/');
    expect(safeReturnUrl('//elsewhere.example/path')).toBe('/');
    expect(safeReturnUrl('/\\elsewhere.example')).toBe('/');
  });

  it('does not loop back to the sign-in page', () => {
    expect(safeReturnUrl('/sign-in?returnUrl=%2F')).toBe('/');
    expect(safeReturnUrl(undefined)).toBe('/');
  });
});
