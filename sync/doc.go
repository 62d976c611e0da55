// Package sync is Cornerbook's replication protocol: the record every
// device, export and import speaks, the hybrid logical clock that stamps it,
// the last-writer-wins order with sticky deletes, and the push/pull message
// shapes.
//
// The directory name is fixed by the project layout and clashes with the
// standard library's sync. Every importer uses the one alias devsync:
//
//	import devsync "cornerbook/sync"
//
// The package does no I/O. Storage applies the merge inside a bbolt
// transaction; the server speaks the messages over HTTP.
package sync
