package fit

// CheckpointOptions returns the options a checkpointed fit was started
// with, so that a caller can tell a user which of the options given on
// resume differ from them (Resume itself always continues with the
// checkpoint's model-shaping options).
func CheckpointOptions(path string) (Options, error) {
	ck, err := readCheckpoint(path)
	if err != nil {
		return Options{}, err
	}
	return ck.Options, nil
}
