// What a user knows about the object besides the measured data (REFERENCES.md [kudo2008],
// [defrise2006]): regions of known value and the object's outline. Plain JSON inside a recipe;
// masks are images handed to the run by name (RecipeInputs.masks), like a file prior.
// Coordinates are mm in Rimfill's image frame (x to the patient's left, y anterior, z superior).

/** A disk of known value; in a cone-beam volume a cylinder over `z` (all slices when absent). */
export interface KnownCircle {
  shape: 'circle';
  x: number;
  y: number;
  /** Radius, mm. */
  r: number;
  /** The value the region has, HU. */
  hu: number;
  /** Cone beam: the slab [z0, z1] (mm) the cylinder spans; absent: every slice. */
  z?: [number, number];
  /** Shown in reports; absent: made from the shape. */
  label?: string;
}

/** A mask image (values > 0.5 inside; 2D or a volume) of known value. */
export interface KnownMask {
  shape: 'mask';
  /** Name of the mask in RecipeInputs.masks (a file name on the command line). */
  input: string;
  hu: number;
  label?: string;
}

export type KnownRegion = KnownCircle | KnownMask;

/** The object's outline (its support): nothing but air lies outside it. */
export type Outline =
  /** An ellipse with semi-axes a (along x before rotation) and b, rotated by angleDeg counter-clockwise. */
  | { shape: 'ellipse'; cx: number; cy: number; a: number; b: number; angleDeg?: number }
  /** A closed polygon (x, y pairs, mm), in order around the object. */
  | { shape: 'polygon'; points: [number, number][] }
  /** A mask image (values > 0.5 inside), by name in RecipeInputs.masks. */
  | { shape: 'mask'; input: string };

/** Everything a recipe may know beyond the data. */
export interface Knowledge {
  known?: KnownRegion[];
  outline?: Outline;
}
