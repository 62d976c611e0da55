package storage_test

import (
	"testing"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
)

func TestConformance(t *testing.T) {
	storagetest.RunConformance(t, func(t *testing.T) *storage.DB { return storagetest.MustOpen(t) })
}
