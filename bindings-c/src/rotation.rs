//! Rotation conversions: quaternions (w, x, y, z), row-major 3×3 matrices, z-y-x Euler angles
//! and rotation vectors.

use rotaframe::nalgebra::Matrix3;
use rotaframe::rotation::{self, EulerZyx};

use crate::status::{boundary, out, read, rf_status, slice, slice_mut};
use crate::types::{put_row_major, rf_euler, rf_quat, rf_vec3};

/// Body-to-local-level quaternion from z-y-x Euler angles (rad).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_from_euler(angles: *const rf_euler, out_quat: *mut rf_quat) -> rf_status {
    boundary(|| {
        let a = unsafe { read(angles) }?;
        let e = EulerZyx::new(a.yaw, a.pitch, a.roll);
        e.validate("angles")?;
        *unsafe { out(out_quat) }? = (&e.to_quaternion()).into();
        Ok(())
    })
}

/// z-y-x Euler angles (rad) of a body-to-local-level unit quaternion. At ±90° pitch roll is 0.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_euler_from_quat(quat: *const rf_quat, out_angles: *mut rf_euler) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        let e = EulerZyx::from_quaternion(&q);
        *unsafe { out(out_angles) }? = rf_euler { yaw: e.yaw, pitch: e.pitch, roll: e.roll };
        Ok(())
    })
}

/// Row-major rotation matrix of a unit quaternion, written to `out_matrix[9]`
/// (`out_matrix[3 * row + column]`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_to_matrix(quat: *const rf_quat, out_matrix: *mut f64) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        let out_matrix = unsafe { slice_mut(out_matrix, 9) }?;
        put_row_major(out_matrix, &rotation::matrix_from_quaternion(&q));
        Ok(())
    })
}

/// Unit quaternion of a row-major rotation matrix `matrix[9]`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_matrix_to_quat(matrix: *const f64, out_quat: *mut rf_quat) -> rf_status {
    boundary(|| {
        let m = Matrix3::from_row_slice(unsafe { slice(matrix, 9) }?);
        let q = rotation::quaternion_from_matrix(&m, "matrix")?;
        *unsafe { out(out_quat) }? = (&q).into();
        Ok(())
    })
}

/// Hamilton product `p ⊗ q` of unit quaternions: the rotation `q` followed by `p`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_multiply(p: *const rf_quat, q: *const rf_quat, out_quat: *mut rf_quat) -> rf_status {
    boundary(|| {
        let (p, q) = (unsafe { read(p) }?.to_core("p")?, unsafe { read(q) }?.to_core("q")?);
        *unsafe { out(out_quat) }? = (&(p * q)).into();
        Ok(())
    })
}

/// A vector rotated by a unit quaternion: `q v q*`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_rotate(quat: *const rf_quat, vector: *const rf_vec3, out_vector: *mut rf_vec3) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        let v = rotaframe::frames::FreeVector::<rotaframe::frames::AnyFrame>::try_from_vector(
            unsafe { read(vector) }?.into(),
            "vector",
        )?;
        *unsafe { out(out_vector) }? = (q * v.vector).into();
        Ok(())
    })
}

/// Unit quaternion of a rotation vector (angle × axis, rad).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_from_rotvec(rotvec: *const rf_vec3, out_quat: *mut rf_quat) -> rf_status {
    boundary(|| {
        let q = rotation::quaternion_from_rotation_vector(&unsafe { read(rotvec) }?.into(), "rotvec")?;
        *unsafe { out(out_quat) }? = (&q).into();
        Ok(())
    })
}

/// Rotation vector (angle in [0, π] × axis) of a unit quaternion.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_to_rotvec(quat: *const rf_quat, out_rotvec: *mut rf_vec3) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        *unsafe { out(out_rotvec) }? = rotation::rotation_vector_from_quaternion(&q).into();
        Ok(())
    })
}
