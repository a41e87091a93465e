import { fileSizeText } from '../../../shared/file-size.js';
import { withUnit } from '../format.js';

/**
 * A stored size as people read it ("3.38 MB", shared/file-size.ts, as the figure page and the mail
 * write it), on one line, with the exact byte count on hover and for screen readers' descriptions.
 */
export function FileSize({ bytes }: { bytes: number }) {
  const exact = withUnit(bytes, 'byte');
  return (
    <span className="tnum whitespace-nowrap" title={exact} data-bytes={bytes}>
      {fileSizeText(bytes)}
    </span>
  );
}
