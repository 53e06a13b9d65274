//! The decoders a recipe can name, and the settings nested cross-validation chooses among.
//!
//! Only names and facts about settings live here; `decoders/` builds and describes each decoder. Most decoders
//! predict a class ([`Classifier::ALL`]); two predict a number ([`Classifier::REGRESSORS`]): ridge regression of a
//! continuous variable, and ridge regression of an angle's sine and cosine. An analysis of classes refuses the
//! regressors and an analysis of a continuous variable refuses the classifiers, each with a message.

use serde::{Deserialize, Serialize};

/// The grid of C values tried (10⁻³ … 10³).
pub const C_GRID: [f64; 7] = [1e-3, 1e-2, 1e-1, 1.0, 1e1, 1e2, 1e3];
/// The ridge penalties α tried inside each training fold (10⁻² … 10⁵, on standardised features).
pub const ALPHA_GRID: [f64; 8] = [1e-2, 1e-1, 1.0, 1e1, 1e2, 1e3, 1e4, 1e5];
/// Factors on the default kernel width tried for the Gaussian-kernel SVM.
pub const GAMMA_FACTORS: [f64; 3] = [0.1, 1.0, 10.0];

/// One point of a grid: C, and for the Gaussian-kernel SVM the factor on its default γ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Setting {
    pub c: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gamma_factor: Option<f64>,
}

impl std::fmt::Display for Setting {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "C = {}", self.c)?;
        if let Some(g) = self.gamma_factor {
            write!(f, ", γ × {g}")?;
        }
        Ok(())
    }
}

/// The decoders a recipe can name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Classifier {
    LinearSvm,
    ShrinkageLda,
    NearestMean,
    GaussianNb,
    PoissonNb,
    Logistic,
    RbfSvm,
    /// Ridge regression of a continuous variable (its penalty chosen inside each training fold).
    Ridge,
    /// Ridge regression of an angle's sine and cosine, read back as an angle.
    CircularRidge,
}

impl Classifier {
    /// Every decoder of classes (the regressors are [`Classifier::REGRESSORS`]).
    pub const ALL: [Classifier; 7] = [
        Classifier::LinearSvm,
        Classifier::ShrinkageLda,
        Classifier::NearestMean,
        Classifier::GaussianNb,
        Classifier::PoissonNb,
        Classifier::Logistic,
        Classifier::RbfSvm,
    ];

    /// The decoders of a continuous variable.
    pub const REGRESSORS: [Classifier; 2] = [Classifier::Ridge, Classifier::CircularRidge];

    /// The spelling used in recipes and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Classifier::LinearSvm => "linear-svm",
            Classifier::ShrinkageLda => "shrinkage-lda",
            Classifier::NearestMean => "nearest-mean",
            Classifier::GaussianNb => "gaussian-nb",
            Classifier::PoissonNb => "poisson-nb",
            Classifier::Logistic => "logistic",
            Classifier::RbfSvm => "rbf-svm",
            Classifier::Ridge => "ridge",
            Classifier::CircularRidge => "circular-ridge",
        }
    }

    pub fn from_name(name: &str) -> Option<Classifier> {
        Classifier::ALL
            .into_iter()
            .chain(Classifier::REGRESSORS)
            .find(|c| c.name() == name)
    }

    /// Whether the decoder predicts a number (a continuous or circular variable) rather than a class.
    pub fn is_regression(self) -> bool {
        matches!(self, Classifier::Ridge | Classifier::CircularRidge)
    }

    /// Whether the regularisation constant C means anything for this decoder.
    pub fn uses_c(self) -> bool {
        matches!(
            self,
            Classifier::LinearSvm | Classifier::Logistic | Classifier::RbfSvm
        )
    }

    /// Whether the decoder models raw spike counts (and so needs non-negative values and no standardisation).
    pub fn needs_counts(self) -> bool {
        matches!(self, Classifier::PoissonNb)
    }

    /// The setting grid nested cross-validation searches, for decoders that have a setting.
    pub fn grid(self) -> Option<Vec<Setting>> {
        let gammas: &[Option<f64>] = if self == Classifier::RbfSvm {
            &[Some(0.1), Some(1.0), Some(10.0)]
        } else {
            &[None]
        };
        debug_assert!(self != Classifier::RbfSvm || gammas.len() == GAMMA_FACTORS.len());
        self.uses_c().then(|| {
            C_GRID
                .iter()
                .flat_map(|&c| {
                    gammas
                        .iter()
                        .map(move |&gamma_factor| Setting { c, gamma_factor })
                })
                .collect()
        })
    }
}
