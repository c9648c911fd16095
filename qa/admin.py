"""Django admin for staff. Events are read-only: no admin path edits or deletes the audit trail."""

from __future__ import annotations

from django.contrib import admin

from .models import (
    Conflict,
    Event,
    Finding,
    Job,
    Member,
    Opening,
    Photo,
    SealPoint,
    SyncOperation,
    Wall,
    WallType,
)


class MemberInline(admin.TabularInline):
    model = Member
    extra = 0


@admin.register(Job)
class JobAdmin(admin.ModelAdmin):
    list_display = ["name", "address", "units", "rating_scheme"]
    inlines = [MemberInline]


@admin.register(WallType)
class WallTypeAdmin(admin.ModelAdmin):
    list_display = ["code", "name", "job", "construction", "design_rating", "tl_source"]
    list_filter = ["construction", "tl_source"]


@admin.register(Wall)
class WallAdmin(admin.ModelAdmin):
    list_display = ["tag", "job", "level", "location", "wall_type", "target_rating", "removed"]
    list_filter = ["job", "level"]
    search_fields = ["tag", "location"]


@admin.register(Finding)
class FindingAdmin(admin.ModelAdmin):
    list_display = ["id", "wall", "kind", "face", "trade", "status", "removed"]
    list_filter = ["status", "trade", "kind"]
    raw_id_fields = ["wall", "seal_point"]

    def has_delete_permission(self, request, obj=None):
        return False  # removal is an event, done in the app


admin.site.register([SealPoint, Opening, Member, SyncOperation, Conflict])


@admin.register(Photo)
class PhotoAdmin(admin.ModelAdmin):
    list_display = ["id", "job", "wall", "finding", "purpose", "uploaded_by", "uploaded_at"]
    exclude = ["image", "thumbnail"]  # files only through the membership-checking view

    def has_delete_permission(self, request, obj=None):
        return False


@admin.register(Event)
class EventAdmin(admin.ModelAdmin):
    list_display = ["at", "job", "actor", "verb", "target_type", "target_id"]
    list_filter = ["verb"]

    def has_add_permission(self, request):
        return False

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False
