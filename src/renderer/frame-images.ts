// The frames of the shown check as images, made once each and kept, so a strip or detail drawn again
// shows them without asking the host again.
import { el, svg } from './dom.js';
import { showFrame } from './frame-image.js';

const thumbSide = 320;
const detailSide = 1200;

export interface FrameImages {
  /** A frame at strip size (an HTML img). */
  thumbnail(file: string): HTMLImageElement;
  /** A frame at detail size (an SVG image, drawn under the tie points). */
  full(file: string): SVGImageElement;
  /** Another check is shown: its frames are other files. */
  forget(): void;
}

export function createFrameImages(frameUrl: (file: string, maxSide: number) => string): FrameImages {
  let thumbs = new Map<string, HTMLImageElement>();
  let fulls = new Map<string, SVGImageElement>();
  return {
    thumbnail(file: string): HTMLImageElement {
      let img = thumbs.get(file);
      if (!img) {
        img = el('img', { loading: 'lazy', decoding: 'async', draggable: 'false', alt: file });
        showFrame(img, 'src', frameUrl(file, thumbSide));
        thumbs.set(file, img);
      }
      return img;
    },
    full(file: string): SVGImageElement {
      let img = fulls.get(file);
      if (!img) {
        img = svg('image');
        showFrame(img, 'href', frameUrl(file, detailSide));
        fulls.set(file, img);
      }
      return img;
    },
    forget(): void {
      thumbs = new Map();
      fulls = new Map();
    },
  };
}
