//! Scoring pooled test predictions.

/// Accuracy and balanced accuracy (mean recall over the classes present among the test trials) of row-major
/// confusion counts (rows = true class).
pub fn accuracies(confusion: &[u32], n_classes: usize) -> (f64, f64) {
    let (mut correct, mut total, mut recall_sum, mut present) = (0u64, 0u64, 0.0, 0usize);
    for (c, row) in confusion.chunks_exact(n_classes).enumerate() {
        let in_class: u32 = row.iter().sum();
        correct += u64::from(row[c]);
        total += u64::from(in_class);
        if in_class > 0 {
            recall_sum += row[c] as f64 / in_class as f64;
            present += 1;
        }
    }
    (correct as f64 / total as f64, recall_sum / present as f64)
}
