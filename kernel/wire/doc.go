// Package wire is the byte-level half of the Jupyter messaging protocol
// (version 5.3): connection files, the multipart message framing, HMAC
// signatures and the message type names. It knows nothing of sockets or of
// what a message means, and it uses only the standard library.
//
// A message on the wire is a list of frames
//
//	ident_1 … ident_k  "<IDS|MSG>"  signature  header  parent_header  metadata  content  buffer_1 …
//
// where the signature is the lower-case hex HMAC of the four JSON frames
// header, parent_header, metadata and content, in that order, under the key
// of the connection file. An empty key switches signing off: the signature
// frame is then empty on send and is not checked on receipt.
package wire
