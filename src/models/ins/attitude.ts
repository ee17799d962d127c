/**
 * Attitude kernels: unit quaternion q_nb = [w, x, y, z] taking body-frame vectors to the local ENU
 * frame, its direction-cosine matrix C_nb, rotation-vector increments and Euler angles.
 * Body frame x forward, y left, z up. Euler angles (reported): C_nb = Rz(yaw)·Ry(−pitch)·Rx(roll),
 * yaw counter-clockwise from east; heading = 90° − yaw, clockwise from north; pitch nose-up positive;
 * roll positive right side down.
 * Source: Groves, "Principles of GNSS, Inertial, and Multisensor Integrated Navigation Systems",
 * 2nd ed. (2013), §2.2 and App. E (quaternion algebra); Savage, "Strapdown inertial navigation
 * integration algorithm design, part 1", J. Guid. Control Dyn. 21(1), 1998 (rotation-vector update)
 * — from memory.
 */

/** C_nb (row-major 3×3) of the unit quaternion at q[qOff..qOff+3]. */
export function quatToDcm(q: Float64Array, qOff: number, C: Float64Array): void {
  const w = q[qOff]!, x = q[qOff + 1]!, y = q[qOff + 2]!, z = q[qOff + 3]!;
  C[0] = 1 - 2 * (y * y + z * z);
  C[1] = 2 * (x * y - w * z);
  C[2] = 2 * (x * z + w * y);
  C[3] = 2 * (x * y + w * z);
  C[4] = 1 - 2 * (x * x + z * z);
  C[5] = 2 * (y * z - w * x);
  C[6] = 2 * (x * z - w * y);
  C[7] = 2 * (y * z + w * x);
  C[8] = 1 - 2 * (x * x + y * y);
}

/** Normalize the quaternion in place: rounding in repeated products drifts |q| from 1, which would scale C. */
export function quatNormalize(q: Float64Array, qOff: number): void {
  const w = q[qOff]!, x = q[qOff + 1]!, y = q[qOff + 2]!, z = q[qOff + 3]!;
  const inv = 1 / Math.sqrt(w * w + x * x + y * y + z * z);
  q[qOff] = w * inv;
  q[qOff + 1] = x * inv;
  q[qOff + 2] = y * inv;
  q[qOff + 3] = z * inv;
}

/**
 * q ← q ⊗ δq(θ) with θ a body-frame rotation vector (rad): δq = [cos(|θ|/2), sin(|θ|/2)·θ/|θ|].
 * The closed form (not the first-order 1 + θ/2) keeps the update exact for a constant rate.
 */
export function quatRotateBody(q: Float64Array, qOff: number, tx: number, ty: number, tz: number): void {
  const a = Math.sqrt(tx * tx + ty * ty + tz * tz);
  let c: number, s: number;
  if (a < 1e-9) {
    // series of cos(a/2) and sin(a/2)/a: exact to double precision for tiny angles
    c = 1 - (a * a) / 8;
    s = 0.5 - (a * a) / 48;
  } else {
    c = Math.cos(0.5 * a);
    s = Math.sin(0.5 * a) / a;
  }
  const bw = c, bx = s * tx, by = s * ty, bz = s * tz;
  const w = q[qOff]!, x = q[qOff + 1]!, y = q[qOff + 2]!, z = q[qOff + 3]!;
  // Hamilton product q ⊗ b
  q[qOff] = w * bw - x * bx - y * by - z * bz;
  q[qOff + 1] = w * bx + x * bw + y * bz - z * by;
  q[qOff + 2] = w * by - x * bz + y * bw + z * bx;
  q[qOff + 3] = w * bz + x * by - y * bx + z * bw;
}

/**
 * q ← δq(φ) ⊗ q with φ a navigation-frame rotation vector: the attitude correction of the error
 * state, C_nb ← (I + [φ×]) C_nb to first order (exact rotation used).
 */
export function quatRotateNav(q: Float64Array, qOff: number, px: number, py: number, pz: number): void {
  const a = Math.sqrt(px * px + py * py + pz * pz);
  let c: number, s: number;
  if (a < 1e-9) {
    c = 1 - (a * a) / 8;
    s = 0.5 - (a * a) / 48;
  } else {
    c = Math.cos(0.5 * a);
    s = Math.sin(0.5 * a) / a;
  }
  const aw = c, ax = s * px, ay = s * py, az = s * pz;
  const w = q[qOff]!, x = q[qOff + 1]!, y = q[qOff + 2]!, z = q[qOff + 3]!;
  // Hamilton product a ⊗ q
  q[qOff] = aw * w - ax * x - ay * y - az * z;
  q[qOff + 1] = aw * x + ax * w + ay * z - az * y;
  q[qOff + 2] = aw * y - ax * z + ay * w + az * x;
  q[qOff + 3] = aw * z + ax * y - ay * x + az * w;
}

/** Quaternion of C_nb = Rz(yaw)·Ry(−pitch)·Rx(roll) (radians), written at q[qOff]. */
export function quatFromEuler(rollRad: number, pitchRad: number, yawRad: number, q: Float64Array, qOff: number): void {
  const cr = Math.cos(0.5 * rollRad), sr = Math.sin(0.5 * rollRad);
  // rotation about y by −pitch
  const cp = Math.cos(-0.5 * pitchRad), sp = Math.sin(-0.5 * pitchRad);
  const cy = Math.cos(0.5 * yawRad), sy = Math.sin(0.5 * yawRad);
  // qz ⊗ qy ⊗ qx
  q[qOff] = cy * cp * cr + sy * sp * sr;
  q[qOff + 1] = cy * cp * sr - sy * sp * cr;
  q[qOff + 2] = cy * sp * cr + sy * cp * sr;
  q[qOff + 3] = sy * cp * cr - cy * sp * sr;
}

/** Roll, pitch, yaw (radians) of C_nb = Rz(yaw)·Ry(−pitch)·Rx(roll), written into out[0..2]. */
export function dcmToEuler(C: Float64Array, out: Float64Array | number[]): void {
  // C[2][0] = sin(pitch), C[2][1] = cos(pitch) sin(roll), C[2][2] = cos(pitch) cos(roll)
  out[0] = Math.atan2(C[7]!, C[8]!);
  out[1] = Math.asin(Math.max(-1, Math.min(1, C[6]!)));
  // C[0][0] = cos(yaw) cos(pitch), C[1][0] = sin(yaw) cos(pitch)
  out[2] = Math.atan2(C[3]!, C[0]!);
}

/** Heading clockwise from north (degrees, [0, 360)) of a yaw counter-clockwise from east (radians). */
export function yawToHeadingDeg(yawRad: number): number {
  const h = 90 - (yawRad * 180) / Math.PI;
  return ((h % 360) + 360) % 360;
}

/** Yaw counter-clockwise from east (radians) of a heading clockwise from north (degrees). */
export function headingDegToYaw(headingDeg: number): number {
  return ((90 - headingDeg) * Math.PI) / 180;
}

/** Rotation C = Rz(yaw)·Ry(pitch)·Rx(roll) (plain right-handed axis rotations, radians), row-major. */
export function rotationZyx(rollRad: number, pitchRad: number, yawRad: number, C: Float64Array): Float64Array {
  const cr = Math.cos(rollRad), sr = Math.sin(rollRad);
  const cp = Math.cos(pitchRad), sp = Math.sin(pitchRad);
  const cy = Math.cos(yawRad), sy = Math.sin(yawRad);
  C[0] = cy * cp;
  C[1] = cy * sp * sr - sy * cr;
  C[2] = cy * sp * cr + sy * sr;
  C[3] = sy * cp;
  C[4] = sy * sp * sr + cy * cr;
  C[5] = sy * sp * cr - cy * sr;
  C[6] = -sp;
  C[7] = cp * sr;
  C[8] = cp * cr;
  return C;
}
