/**
 * The part of JupyterLab's session and kernel API that the bridge uses. JupyterLab's own
 * `ISessionContext` satisfies {@link IBridgeSession} as it is (a spec checks that at compile
 * time); the narrow shape lets jest drive the bridge with a fake kernel.
 */
import type { Kernel, KernelMessage } from '@jupyterlab/services';
import type { JSONObject, JSONValue } from '@lumino/coreutils';
import type { ISignal } from '@lumino/signaling';

/** Binary buffers of a kernel message. */
export type MessageBuffers = (ArrayBuffer | ArrayBufferView)[];

/** A sent request: `done` settles once the kernel is idle again after handling it. */
export interface IBridgeFuture {
  /** Resolves when the kernel finished the request; rejects when it was cancelled (restart). */
  readonly done: Promise<unknown>;
}

/** A comm to the kernel (JupyterLab's `Kernel.IComm`). */
export interface IBridgeComm {
  /** The comm's id. */
  readonly commId: string;
  /** Whether the comm was disposed (kernel restart, close). */
  readonly isDisposed: boolean;
  /** Called for every message the kernel sends on this comm. */
  onMsg: (msg: KernelMessage.ICommMsgMsg) => void | PromiseLike<void>;
  /** Called when the kernel (or this side) closes the comm. */
  onClose: (msg: KernelMessage.ICommCloseMsg) => void | PromiseLike<void>;
  /** Send `comm_open` to the kernel. */
  open(data?: JSONValue, metadata?: JSONObject, buffers?: MessageBuffers): IBridgeFuture;
  /** Send a `comm_msg`; JupyterLab serializes a view's whole underlying buffer, so send owners. */
  send(data: JSONValue, metadata?: JSONObject, buffers?: MessageBuffers, disposeOnDone?: boolean): IBridgeFuture;
  /** Send `comm_close` and run `onClose`. */
  close(data?: JSONValue, metadata?: JSONObject, buffers?: MessageBuffers): IBridgeFuture;
  /** Forget the comm on this side without telling the kernel. */
  dispose(): void;
}

/** A kernel connection (JupyterLab's `Kernel.IKernelConnection`). */
export interface IBridgeKernel {
  /** The server-side kernel id. */
  readonly id: string;
  /** Whether the connection was disposed (kernel shut down or dead). */
  readonly isDisposed: boolean;
  /** The kernel's info reply (its `language_info` says which language it runs). */
  readonly info: Promise<KernelMessage.IInfoReply>;
  /** Run code on the kernel's main shell. */
  requestExecute(
    content: KernelMessage.IExecuteRequestMsg['content'],
    disposeOnDone?: boolean
  ): { readonly done: Promise<KernelMessage.IExecuteReplyMsg> };
  /** A new comm to a target (not yet opened). */
  createComm(targetName: string, commId?: string): IBridgeComm;
}

/** The session of a notebook (JupyterLab's `ISessionContext`). */
export interface IBridgeSession {
  /** The current session; its kernel is null while the notebook has none. */
  readonly session: { readonly kernel: IBridgeKernel | null } | null;
  /** Emitted when the session's kernel was replaced (or removed). */
  readonly kernelChanged: ISignal<unknown, unknown>;
  /** Emitted when the kernel's execution status changed (idle, busy, restarting, dead, …). */
  readonly statusChanged: ISignal<unknown, Kernel.Status>;
  /** Emitted when the websocket connection to the kernel changed. */
  readonly connectionStatusChanged: ISignal<unknown, Kernel.ConnectionStatus>;
  /** Emitted when the session context is disposed (its notebook closed). */
  readonly disposed: ISignal<unknown, unknown>;
  /** Whether the session context was disposed. */
  readonly isDisposed: boolean;
}
