package wire

// Message types of protocol 5.3 used by the kernel.
const (
	KernelInfoRequest = "kernel_info_request"
	KernelInfoReply   = "kernel_info_reply"
	ExecuteRequest    = "execute_request"
	ExecuteReply      = "execute_reply"
	CompleteRequest   = "complete_request"
	CompleteReply     = "complete_reply"
	InspectRequest    = "inspect_request"
	InspectReply      = "inspect_reply"
	IsCompleteRequest = "is_complete_request"
	IsCompleteReply   = "is_complete_reply"
	HistoryRequest    = "history_request"
	HistoryReply      = "history_reply"
	CommInfoRequest   = "comm_info_request"
	CommInfoReply     = "comm_info_reply"
	ShutdownRequest   = "shutdown_request"
	ShutdownReply     = "shutdown_reply"
	InterruptRequest  = "interrupt_request"
	InterruptReply    = "interrupt_reply"

	Status            = "status"
	ExecuteInput      = "execute_input"
	ExecuteResult     = "execute_result"
	DisplayData       = "display_data"
	UpdateDisplayData = "update_display_data"
	Stream            = "stream"
	ClearOutput       = "clear_output"
	Error             = "error"

	CommOpen  = "comm_open"
	CommMsg   = "comm_msg"
	CommClose = "comm_close"
)

// ReplyType returns the reply type of a request type: "x_request" → "x_reply".
// It returns "" when msgType does not end in "_request".
func ReplyType(msgType string) string {
	const req = "_request"
	if len(msgType) > len(req) && msgType[len(msgType)-len(req):] == req {
		return msgType[:len(msgType)-len(req)] + "_reply"
	}
	return ""
}
