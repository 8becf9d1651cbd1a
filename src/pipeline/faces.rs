//! The values at cell faces a build writes on request (`sampling.faces`,
//! `sampling.staggered_velocity`): one group per grid axis, `/faces_<axis>`,
//! with every background field at the faces normal to that axis (and the
//! accelerations and diagnostics `output.fields` asks for), and the group
//! `/staggered` with the velocity component along each axis at the centres
//! of the faces normal to it.
//!
//! Owns: which face samplers a build runs, the groups they fill and their
//! `sampling` descriptions. Does not own how a face is sampled (see
//! [`crate::sample::Sampler::faces`]) nor the file layout (the writers take
//! any placement).

use super::{gas_constants, Built, Error};
use crate::fields::FieldSpec;
use crate::grid::Coord;
use crate::sample::Sampler;

/// The group of the staggered velocity components.
pub const STAGGERED: &str = "staggered";

/// The group of the values at the faces normal to an axis of `coord`.
pub fn group_name(coord: Coord) -> &'static str {
    match coord {
        Coord::R => "faces_R",
        Coord::Phi => "faces_phi",
        Coord::X => "faces_x",
        Coord::Y => "faces_y",
        Coord::Z => "faces_z",
        Coord::Sph => "faces_r",
        Coord::Theta => "faces_theta",
    }
}

/// One face sampler of a build, the group its fields go to and which of
/// its fields (None: all).
pub(crate) struct FacePart<'b> {
    pub group: &'static str,
    pub sampler: Sampler<'b>,
    pub picks: Option<Vec<usize>>,
}

impl Built<'_> {
    /// The face samplers of the build, in the order their groups are
    /// written: `/faces_<axis>` axis by axis, then `/staggered`.
    pub(crate) fn face_parts(&self) -> Result<Vec<FacePart<'_>>, Error> {
        let request = self.loaded.faces;
        let grid = &self.loaded.grid;
        let gas = gas_constants(self.loaded);
        let mut parts = Vec::new();
        if let Some(nodes) = request.values {
            for (a, axis) in grid.axes().iter().enumerate() {
                let s = Sampler::faces(self.background(), grid, a, nodes, &gas)
                    .map_err(|e| self.sample_error(e))?
                    .with_extras(&self.extras);
                parts.push(FacePart {
                    group: group_name(axis.coord),
                    sampler: s,
                    picks: None,
                });
            }
        }
        if request.staggered {
            for (a, axis) in grid.axes().iter().enumerate() {
                let s = Sampler::faces(self.background(), grid, a, None, &gas)
                    .map_err(|e| self.sample_error(e))?;
                let want = format!("velocity_{}", axis.coord.name());
                let k = s.fields().iter().position(|f| f.name == want);
                parts.push(FacePart {
                    group: STAGGERED,
                    sampler: s,
                    picks: Some(k.into_iter().collect()),
                });
            }
        }
        Ok(parts)
    }

    /// The face groups and their fields, in slab order.
    pub(super) fn face_groups(parts: &[FacePart<'_>]) -> Vec<(&'static str, Vec<FieldSpec>)> {
        let mut out: Vec<(&'static str, Vec<FieldSpec>)> = Vec::new();
        for p in parts {
            let fields = p.sampler.fields();
            let fields: Vec<FieldSpec> = match &p.picks {
                None => fields,
                Some(k) => k.iter().map(|k| fields[*k].clone()).collect(),
            };
            match out.last_mut() {
                Some(last) if last.0 == p.group => last.1.extend(fields),
                _ => out.push((p.group, fields)),
            }
        }
        out
    }

    /// The `sampling` attribute of each face group's datasets.
    pub(crate) fn face_sampling(&self) -> Result<Vec<(&'static str, String)>, Error> {
        let mut out = Vec::new();
        for p in self.face_parts()? {
            if p.group == STAGGERED {
                if out.iter().all(|(g, _)| *g != STAGGERED) {
                    out.push((
                        STAGGERED,
                        "point values of the background: the velocity component along each \
                         grid axis at the centres of the faces normal to it (velocity_<a>: the \
                         edges of a, the cell centres of the other axes); no perturbation"
                            .to_string(),
                    ));
                }
            } else {
                out.push((p.group, p.sampler.sampling().to_string()));
            }
        }
        Ok(out)
    }

    /// The face fields of the cell rows `rows`, in the order of
    /// [`Built::face_groups`].
    pub(super) fn face_slabs(
        &self,
        parts: &[FacePart<'_>],
        rows: std::ops::Range<usize>,
        out: &mut Vec<Vec<f64>>,
    ) -> Result<(), Error> {
        for p in parts {
            let slab = p
                .sampler
                .slab(rows.clone())
                .map_err(|e| self.sample_error(e))?;
            match &p.picks {
                None => out.extend(slab.data),
                Some(k) => {
                    let mut data: Vec<Option<Vec<f64>>> = slab.data.into_iter().map(Some).collect();
                    out.extend(k.iter().map(|k| data[*k].take().unwrap_or_default()));
                }
            }
        }
        Ok(())
    }
}
