//! In-fold preprocessing: imputation and scaling fitted on the training part
//! of a split only, then applied unchanged to its validation part (or, at
//! unseal, fitted on the development partition and applied to the sealed
//! one). Nothing outside the training part can change the transform.

mod transform;

pub use transform::{Impute, PrepError, PrepSpec, Scale, Transform};
