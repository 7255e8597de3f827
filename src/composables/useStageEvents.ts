import { onScopeDispose, watch, type Ref } from 'vue'
import type Konva from 'konva'
import type { StageHandle } from './usePanZoom'

export type StagePointerEvent = Konva.KonvaEventObject<PointerEvent>

/** The stage pointer events a canvas tool listens to. */
export type StagePointerHandlers = Partial<Record<'pointerdown' | 'pointermove' | 'pointerup' | 'pointerdblclick', (event: StagePointerEvent) => void>>

/**
 * Attach a tool's pointer handlers to the stage under its own namespace (so tools never remove each other's), follow
 * the stage when it is replaced, and detach when the calling scope ends.
 */
export function useStageEvents(stageRef: Ref<StageHandle | null | undefined>, namespace: string, handlers: StagePointerHandlers): void {
  let attached: Konva.Stage | null = null
  const detach = () => {
    attached?.off(`.${namespace}`)
    attached = null
  }
  watch(
    () => stageRef.value?.getStage() ?? null,
    (stage) => {
      if (stage === attached) return
      detach()
      if (!stage) return
      attached = stage
      for (const [name, handler] of Object.entries(handlers)) stage.on(`${name}.${namespace}`, handler as (event: StagePointerEvent) => void)
    },
    { immediate: true, flush: 'post' },
  )
  onScopeDispose(detach)
}
