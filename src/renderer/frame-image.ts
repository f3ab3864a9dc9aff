// Frames come from the Node side a few at a time: the browser host answers 503 (busy) when more
// are asked for at once than it renders together, so an image that fails is asked for again later.

/** Attempts after the first, and the longest wait between two. */
export const frameRetries = { attempts: 6, firstDelayMs: 500, longestDelayMs: 8000 };

type Later = (run: () => void, ms: number) => unknown;

/** The same address with the attempt's number added, so the browser asks again instead of reusing the failure. */
export function retryUrl(url: string, attempt: number): string {
  return `${url}${url.includes('?') ? '&' : '?'}retry=${attempt}`;
}

/**
 * Points `image` (an HTML img by `src`, an SVG image by `href`) at `url`; when loading fails it
 * tries again after a growing wait (0.5 s, 1 s, 2 s, ... at most 8 s), a few times, then leaves the
 * image empty.
 */
export function showFrame(image: Element, attribute: 'src' | 'href', url: string, later: Later = (run, ms) => setTimeout(run, ms)): void {
  let attempt = 0;
  const failed = (): void => {
    if (attempt >= frameRetries.attempts) return;
    attempt++;
    const wait = Math.min(frameRetries.longestDelayMs, frameRetries.firstDelayMs * 2 ** (attempt - 1));
    later(() => image.setAttribute(attribute, retryUrl(url, attempt)), wait);
  };
  image.addEventListener('error', failed);
  image.addEventListener('load', () => image.removeEventListener('error', failed), { once: true });
  image.setAttribute(attribute, url);
}
