/** Focal length in pixels along the long side from the 35 mm equivalent (36 mm long side). */
export function focalPxFrom35mm(focal35: number, width: number, height: number): number {
  return (focal35 / 36) * Math.max(width, height);
}
