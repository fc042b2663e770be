//! NumPy .npy and .npz files.
